/** The system's headless Chromium (/usr/bin/chromium) driven by playwright-core, with a fresh profile. */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext } from 'playwright-core';

export const CHROMIUM_PATH = '/usr/bin/chromium';

export interface Headless {
  readonly context: BrowserContext;
  close(): Promise<void>;
}

export async function launchChromium(): Promise<Headless> {
  const profile = mkdtempSync(join(tmpdir(), 'bearline-chromium-'));
  // launchPersistentContext passes --user-data-dir=<profile> itself: a fresh one per launch.
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM_PATH,
    headless: true,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  return {
    context,
    async close() {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}
