/** Typed access to scripts/browser.js (the one choice of headless Chromium for tests and scripts). */
import type { BrowserContext, Page } from "playwright-core";

export interface BrowserChoice {
  kind: "env" | "system" | "packaged";
  executablePath: string | null;
  reason: string;
}

export interface LaunchedBrowser {
  context: BrowserContext;
  page: Page;
  choice: BrowserChoice;
  executablePath: string;
  close: () => Promise<void>;
}

// eslint-disable-next-line @typescript-eslint/no-var-requires
const browser = require("../../scripts/browser.js") as {
  chooseBrowser: (o?: { env?: Record<string, string | undefined>; systemPaths?: string[] }) => BrowserChoice;
  launchBrowser: (o?: { viewport?: { width: number; height: number }; choice?: BrowserChoice; cacheRoot?: string }) => Promise<LaunchedBrowser>;
  unpackPackaged: (o?: { cacheRoot?: string }) => Promise<{ executablePath: string; env: Record<string, string>; version: string }>;
  packagedHome: () => string;
  untar: (buffer: Buffer, dir: string) => void;
};

export const { chooseBrowser, launchBrowser, unpackPackaged, packagedHome, untar } = browser;
