/**
 * Builds the command line (bench/cli/arcwatch.ts and the command modules it imports lazily) into
 * dist/cli/ as plain JavaScript with esbuild, so that `arcwatch solve|bench|refine` starts without
 * a TypeScript loader. Run by `npm install` (the `prepare` script), by `npm start`, by the test
 * setup, and by scripts/arcwatch.mjs itself whenever a source is newer than the build, so the built
 * command line never lags behind the code silently.
 *
 * - Packages stay in node_modules (external), except mathjs: bundled, so that only the parser
 *   the engine uses is loaded (app/engine/expr/math.ts), not all of mathjs.
 * - Each source's `import.meta.url` is rewritten to that source file's own URL, so code that
 *   finds files beside itself (the migrations folder, the bench runner's worker threads, which
 *   still load the TypeScript sources of the checkout) behaves exactly as when run from source.
 * - dist/cli/inputs.json lists the project files the build read; cliState() compares their
 *   modification times with the build's.
 *
 * Usage: node scripts/build-cli.mjs [--if-stale]
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const CLI_DIR = path.join("dist", "cli");
const ENTRY_SOURCE = path.join("bench", "cli", "arcwatch.ts");
/** Files that change the build without being one of its inputs. */
const ALWAYS = ["package.json", "package-lock.json", "tsconfig.json", path.join("scripts", "build-cli.mjs")];
/**
 * Packages bundled instead of loaded from node_modules, so that only the parts used are loaded:
 * mathjs (the parser, app/engine/expr/math.ts) and ml-matrix (its ES module sources; the
 * package's Node entry is one CommonJS file that Node must load and scan whole).
 */
const BUNDLED = new Set(["mathjs", "ml-matrix"]);
const SOURCE_ENTRY = { "ml-matrix": path.join("node_modules", "ml-matrix", "src", "index.js") };

/** The built entry module (absolute path). */
export function cliEntry(root = ROOT) {
  return path.join(root, CLI_DIR, "arcwatch.mjs");
}

/** "missing", "stale" or "fresh": whether dist/cli is older than any file it was built from. */
export function cliState(root = ROOT) {
  const entry = cliEntry(root);
  let builtAt;
  let inputs;
  try {
    builtAt = fs.statSync(entry).mtimeMs;
    inputs = JSON.parse(fs.readFileSync(path.join(root, CLI_DIR, "inputs.json"), "utf8"));
  } catch {
    return "missing";
  }
  for (const rel of [...ALWAYS, ...inputs]) {
    let at;
    try {
      at = fs.statSync(path.join(root, rel)).mtimeMs;
    } catch {
      if (ALWAYS.includes(rel)) continue;
      return "stale"; // a source was removed or renamed
    }
    if (at > builtAt) return "stale";
  }
  return "fresh";
}

/** Builds dist/cli; resolves with the build's wall time in seconds. */
export async function buildCli(root = ROOT) {
  const started = performance.now();
  const { build } = await import("esbuild");
  const pkg = JSON.parse(fs.readFileSync(path.join(root, "package.json"), "utf8"));
  const external = Object.keys({ ...pkg.dependencies, ...pkg.devDependencies }).filter((n) => !BUNDLED.has(n));
  // build beside the target, then swap, so a command started meanwhile never sees half a build
  const tmp = path.join(root, "dist", `.cli-${process.pid}-${Date.now()}`);
  const outdir = path.join(root, CLI_DIR);
  const ownUrl = {
    name: "own-import-meta-url",
    setup(b) {
      b.onResolve({ filter: /^ml-matrix$/ }, (args) => ({ path: path.join(root, SOURCE_ENTRY[args.path]) }));
      b.onLoad({ filter: /\.(ts|tsx|mts|mjs|js)$/ }, (args) => {
        if (args.path.includes(`${path.sep}node_modules${path.sep}`)) return undefined;
        let text = fs.readFileSync(args.path, "utf8");
        if (text.includes("import.meta.url")) {
          const rel = path.relative(outdir, args.path).split(path.sep).join("/");
          text = text.replaceAll("import.meta.url", `new URL(${JSON.stringify(rel)}, import.meta.url).href`);
        }
        const ext = path.extname(args.path).slice(1);
        return { contents: text, loader: ext === "mts" ? "ts" : ext === "mjs" ? "js" : ext };
      });
    },
  };
  let result;
  try {
    result = await build({
      absWorkingDir: root,
      entryPoints: { arcwatch: ENTRY_SOURCE },
      outdir: tmp,
      outExtension: { ".js": ".mjs" },
      bundle: true,
      splitting: true,
      format: "esm",
      platform: "node",
      target: "node20",
      external,
      metafile: true,
      logLevel: "warning",
      legalComments: "none",
      // bundled CommonJS (inside mathjs) may call require()
      banner: { js: 'import { createRequire as __arcwatchRequire } from "node:module"; const require = __arcwatchRequire(import.meta.url);' },
      plugins: [ownUrl],
    });
  } catch (err) {
    fs.rmSync(tmp, { recursive: true, force: true });
    throw err;
  }
  const inputs = Object.keys(result.metafile.inputs)
    .filter((p) => !p.includes("node_modules/"))
    .sort();
  fs.writeFileSync(path.join(tmp, "inputs.json"), `${JSON.stringify(inputs, null, 1)}\n`);
  fs.rmSync(outdir, { recursive: true, force: true });
  try {
    fs.renameSync(tmp, outdir);
  } catch {
    fs.rmSync(tmp, { recursive: true, force: true }); // another build finished first
  }
  return (performance.now() - started) / 1000;
}

if (import.meta.url === pathToFileURL(fs.realpathSync(process.argv[1] ?? "")).href) {
  const ifStale = process.argv.includes("--if-stale");
  const state = cliState();
  if (ifStale && state === "fresh") process.exit(0);
  try {
    const seconds = await buildCli();
    console.log(`[arcwatch] command line built into ${CLI_DIR}/ in ${seconds.toFixed(1)} s`);
  } catch (err) {
    console.error(`[arcwatch] building the command line failed: ${err.message}`);
    process.exit(1);
  }
}
