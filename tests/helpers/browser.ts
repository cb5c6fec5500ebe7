/**
 * Debian's chromium through playwright-core, headless, with a fresh profile directory.
 * When /usr/bin/chromium is missing the browser tests fail under CI=true (never a silent
 * skip) and are skipped with a message elsewhere.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Page } from "playwright-core";

export const CHROMIUM = "/usr/bin/chromium";
export const SCREENSHOTS = path.resolve(import.meta.dirname, "..", "screenshots");

export function chromiumAvailable(executable = CHROMIUM): boolean {
  if (fs.existsSync(executable)) return true;
  if (process.env.CI === "true") {
    throw new Error(`${executable} is missing and CI=true: install it (apt-get install -y chromium); browser tests must not be skipped in CI.`);
  }
  console.warn(`[browser tests] ${executable} not found: skipping (install with apt-get install -y chromium).`);
  return false;
}

export async function launchBrowser(): Promise<{ context: BrowserContext; close: () => Promise<void> }> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport: { width: 1366, height: 860 },
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
  });
  return {
    context,
    close: async () => {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** Waits until React has hydrated (the root sets data-hydrated on <html> in an effect). */
export async function hydrated(page: Page): Promise<void> {
  await page.waitForSelector("html[data-hydrated='true']", { timeout: 15_000 });
}

export async function screenshot(page: Page, name: string): Promise<string> {
  fs.mkdirSync(SCREENSHOTS, { recursive: true });
  const file = path.join(SCREENSHOTS, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

/** Signs in with a demo account (README "Demo accounts") and waits for the overview. */
export async function signInAs(page: Page, baseUrl: string, role: "viewer" | "engineer" | "admin"): Promise<void> {
  await page.goto(`${baseUrl}/signin`);
  await hydrated(page);
  await page.fill("input[name=email]", `${role}@arcwatch.test`);
  await page.fill("input[name=password]", `${role}-demo-pass`);
  await Promise.all([page.waitForURL(`${baseUrl}/`), page.click("button[type=submit]")]);
}
