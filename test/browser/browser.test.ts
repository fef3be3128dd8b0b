/**
 * Which headless Chromium the browser tests and scripts drive (scripts/browser.js): the order
 * ELX_CHROMIUM, system chromium, packaged; ELX_BROWSER forcing one; and a real launch of the
 * packaged Chromium (always: it comes with npm ci) and of the system one (when the machine has it).
 */
import * as fs from "fs";
import * as os from "os";
import * as path from "path";
import { chooseBrowser, launchBrowser, packagedHome, unpackPackaged } from "../harness/browser";

const ROOT = path.resolve(__dirname, "../..");
let dir: string;
let fakeExe: string;
let binDir: string;
let plainDir: string;
const nowhere = () => path.join(dir, "no-such-chromium");

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-choose-"));
  fakeExe = path.join(dir, "my-chromium");
  fs.writeFileSync(fakeExe, "#!/bin/sh\n", { mode: 0o755 });
  binDir = path.join(dir, "bin");
  fs.mkdirSync(binDir);
  fs.writeFileSync(path.join(binDir, "chromium"), "#!/bin/sh\n", { mode: 0o755 });
  plainDir = path.join(dir, "plain"); // a chromium that is not executable does not count
  fs.mkdirSync(plainDir);
  fs.writeFileSync(path.join(plainDir, "chromium"), "not a program", { mode: 0o644 });
});

afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe("choosing the browser", () => {
  it("ELX_CHROMIUM comes first, before a system chromium", () => {
    expect(chooseBrowser({ env: { ELX_CHROMIUM: fakeExe, PATH: binDir }, systemPaths: [path.join(binDir, "chromium")] })).toEqual({ kind: "env", executablePath: fakeExe, reason: "ELX_CHROMIUM" });
  });

  it("an ELX_CHROMIUM that is not an executable file is an error naming it", () => {
    expect(() => chooseBrowser({ env: { ELX_CHROMIUM: nowhere() }, systemPaths: [] })).toThrow(`ELX_CHROMIUM=${nowhere()} is not an executable file`);
  });

  it("then the fixed system path, then chromium on PATH", () => {
    const fixed = path.join(binDir, "chromium");
    expect(chooseBrowser({ env: { PATH: plainDir }, systemPaths: [nowhere(), fixed] })).toEqual({ kind: "system", executablePath: fixed, reason: `${fixed} is present` });
    expect(chooseBrowser({ env: { PATH: [plainDir, binDir].join(path.delimiter) }, systemPaths: [nowhere()] })).toEqual({
      kind: "system",
      executablePath: path.join(binDir, "chromium"),
      reason: "chromium is on PATH",
    });
  });

  it("the packaged Chromium when there is no system one (a non-executable file named chromium does not count)", () => {
    expect(chooseBrowser({ env: { PATH: plainDir }, systemPaths: [nowhere()] })).toEqual({ kind: "packaged", executablePath: null, reason: "no system Chromium found" });
  });

  it("ELX_BROWSER=packaged forces the packaged one even with ELX_CHROMIUM and a system chromium present", () => {
    expect(chooseBrowser({ env: { ELX_BROWSER: "Packaged", ELX_CHROMIUM: fakeExe, PATH: binDir }, systemPaths: [path.join(binDir, "chromium")] })).toEqual({
      kind: "packaged",
      executablePath: null,
      reason: "ELX_BROWSER=packaged",
    });
  });

  it("ELX_BROWSER=system without a system chromium is an error, and an unknown ELX_BROWSER names the valid values", () => {
    expect(() => chooseBrowser({ env: { ELX_BROWSER: "system", PATH: plainDir }, systemPaths: [nowhere()] })).toThrow(/^ELX_BROWSER=system, but there is no .* and no chromium on PATH/);
    expect(chooseBrowser({ env: { ELX_BROWSER: "system", PATH: binDir }, systemPaths: [] }).kind).toBe("system");
    expect(() => chooseBrowser({ env: { ELX_BROWSER: "firefox" } })).toThrow("ELX_BROWSER=firefox is not understood: use ELX_BROWSER=packaged (the Chromium of @sparticuz/chromium) or ELX_BROWSER=system");
  });
});

describe("launching", () => {
  it("the packaged Chromium unpacks into its own cache folder (browser, libraries, fonts), once, and renders a page with a real font", async () => {
    const version = JSON.parse(fs.readFileSync(path.join(ROOT, "node_modules", "@sparticuz", "chromium", "package.json"), "utf8")).version as string;
    expect(packagedHome()).toBe(path.join(ROOT, "node_modules", ".cache", "elx-chromium", version));
    // a fresh cache folder, so the unpacking itself runs in this (Jest) process every time
    const cacheRoot = fs.mkdtempSync(path.join(os.tmpdir(), "elx-unpack-"));
    try {
      const unpacked = await unpackPackaged({ cacheRoot });
      const home = path.join(cacheRoot, version);
      expect(unpacked.executablePath).toBe(path.join(home, "chromium"));
      for (const f of ["chromium", "al2023/lib/libnss3.so", "fonts/fonts/Open_Sans/OpenSans-Regular.ttf", "libGLESv2.so", "fonts.conf", "ready"]) expect(fs.existsSync(path.join(home, f))).toBe(true);
      expect(fs.statSync(unpacked.executablePath).size).toBeGreaterThan(100e6);
      expect(fs.readFileSync(path.join(home, "fonts.conf"), "utf8")).toContain(`<dir>${path.join(home, "fonts", "fonts")}</dir>`);
      expect(unpacked.env.LD_LIBRARY_PATH.split(":")[0]).toBe(path.join(home, "al2023", "lib"));
      expect(fs.readdirSync(cacheRoot)).toEqual([version]); // no staging folder left behind
      expect(await unpackPackaged({ cacheRoot })).toEqual(unpacked);
      const b = await launchBrowser({ choice: { kind: "packaged", executablePath: null, reason: "test" }, cacheRoot, viewport: { width: 400, height: 200 } });
      try {
        expect(b.executablePath).toBe(unpacked.executablePath);
        await b.page.setContent('<p id="t" style="font: 16px sans-serif">Elasticity −0.52 (95%: −0.61 to −0.43)</p>');
        const ua = await b.page.evaluate(() => navigator.userAgent);
        expect(ua).toContain(`HeadlessChrome/${version.split(".")[0]}.`);
        // text is laid out with a real font (a missing font would give zero width)
        expect(await b.page.evaluate(() => (document.getElementById("t") as HTMLElement).getBoundingClientRect().width)).toBeGreaterThan(100);
        expect((await b.page.screenshot()).length).toBeGreaterThan(1000);
      } finally {
        await b.close();
      }
    } finally {
      fs.rmSync(cacheRoot, { recursive: true, force: true });
    }
  }, 180000);

  const system = (() => {
    try {
      const c = chooseBrowser({ env: { PATH: process.env.PATH } });
      return c.kind === "system" ? c : null;
    } catch {
      return null;
    }
  })();
  // Only on a machine with a system chromium (the packaged one above is tested everywhere).
  (system ? it : it.skip)(`the system Chromium${system ? ` (${system.executablePath})` : " (none on this machine)"} launches and renders a page`, async () => {
    const b = await launchBrowser({ choice: system!, viewport: { width: 400, height: 200 } });
    try {
      expect(b.executablePath).toBe(system!.executablePath);
      await b.page.setContent("<p>Elasticity</p>");
      expect(await b.page.evaluate(() => navigator.userAgent)).toContain("HeadlessChrome/");
      expect(await b.page.textContent("p")).toBe("Elasticity");
    } finally {
      await b.close();
    }
  }, 60000);
});
