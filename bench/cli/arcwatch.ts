/**
 * `arcwatch <command> [options]`: the command line, one entry for the solve, bench and refine
 * commands. Built into dist/cli/ by scripts/build-cli.mjs and started by scripts/arcwatch.mjs (the
 * package's `arcwatch` bin; `npm run solve|bench|refine` are aliases). Each command module is
 * imported only when named, and loads the engine (or the database) only after its options are
 * checked, so `--help` and usage errors answer at once.
 */
const COMMANDS = {
  solve: { summary: "solve one problem with one transcription and print the report", load: () => import("../solve") },
  bench: { summary: "run a suite on this checkout, record it and check it for regressions", load: () => import("../run") },
  refine: { summary: "refine a problem's solution by indirect multiple shooting", load: () => import("../refine") },
} as const;

type CommandName = keyof typeof COMMANDS;

const HELP = `usage: arcwatch <command> [options]     (arcwatch <command> --help for its options)

commands:
${Object.entries(COMMANDS)
  .map(([name, c]) => `  ${name.padEnd(8)} ${c.summary}`)
  .join("\n")}

The same commands run as npm scripts: npm run --silent solve -- <options>, and so on.`;

export async function main(argv: string[]): Promise<void> {
  const [name, ...rest] = argv;
  if (name === "--help" || name === "-h" || name === "help") {
    process.stdout.write(`${HELP}\n`);
    return;
  }
  if (name === undefined) {
    process.stderr.write(`error: a command is required\n${HELP}\n`);
    process.exitCode = 2;
    return;
  }
  if (!Object.prototype.hasOwnProperty.call(COMMANDS, name)) {
    process.stderr.write(`error: unknown command "${name}" (known: ${Object.keys(COMMANDS).join(", ")})\n${HELP}\n`);
    process.exitCode = 2;
    return;
  }
  const command = name as CommandName;
  const code = await (await COMMANDS[command].load()).main(rest);
  // the bench command may leave worker threads and timers behind; it always ended the process
  if (command === "bench") process.exit(code);
  process.exitCode = code;
}
