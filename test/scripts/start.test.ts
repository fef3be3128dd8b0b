/**
 * `npm start` (scripts/start.js): the preview starts without any certificate; the https server for
 * the host says what it needs, makes and installs nothing, and never asks for administrator rights;
 * a taken port is skipped for the preview and named for the add-in (whose port the manifest fixes).
 * The https cases use a throwaway self-signed certificate (test/data/tls, trusted by nothing).
 */
import { spawn } from "child_process";
import * as fs from "fs";
import * as https from "https";
import * as os from "os";
import * as path from "path";
import { holdPort, raw } from "../harness/net";

// eslint-disable-next-line @typescript-eslint/no-var-requires
const { startServers } = require("../../scripts/start.js") as {
  startServers: (o: { dist?: string; previewPort?: number; addinPort?: number; certDir?: string }) => Promise<{
    lines: string[];
    preview: { port: number; url: string };
    addin: { port: number; url: string } | null;
    close: () => Promise<void>;
  }>;
};

const ROOT = path.resolve(__dirname, "../..");
const TLS = path.join(ROOT, "test", "data", "tls");
let dir: string;
let dist: string;
let noCerts: string;

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-start-"));
  dist = path.join(dir, "dist");
  fs.mkdirSync(dist);
  fs.writeFileSync(path.join(dist, "preview.html"), "<p>preview</p>");
  fs.writeFileSync(path.join(dist, "taskpane.html"), "<p>pane</p>");
  noCerts = path.join(dir, "no-certs");
  fs.mkdirSync(noCerts);
});

afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function httpsGet(port: number, p: string): Promise<number> {
  return new Promise((resolve, reject) => {
    https
      .get({ host: "localhost", port, path: p, ca: fs.readFileSync(path.join(TLS, "ca.crt")), agent: false }, (res) => {
        res.resume();
        resolve(res.statusCode ?? 0);
      })
      .on("error", reject);
  });
}

describe("npm start without certificates", () => {
  it("serves the preview and prints one plain line on what the https server needs", async () => {
    const s = await startServers({ dist, previewPort: 0, certDir: noCerts });
    try {
      expect(s.addin).toBeNull();
      expect(s.lines).toEqual([
        `Preview (demo data, live formulas, the pane):  ${s.preview.url}/preview.html`,
        `Add-in over https: not started, it needs ca.crt, localhost.crt, localhost.key in ${noCerts}; make them once with \`npx office-addin-dev-certs install\` (trusting them needs administrator rights). The preview works without them.`,
        `Manifest to sideload:                          ${path.join(dist, "manifest.xml")}`,
      ]);
      expect((await raw(s.preview.port, "/preview.html")).status).toBe(200);
      expect(fs.readdirSync(noCerts)).toEqual([]);
    } finally {
      await s.close();
    }
  });

  it("names only the missing files when some are there", async () => {
    const some = path.join(dir, "some-certs");
    fs.mkdirSync(some);
    fs.copyFileSync(path.join(TLS, "ca.crt"), path.join(some, "ca.crt"));
    const s = await startServers({ dist, previewPort: 0, certDir: some });
    try {
      expect(s.lines[1]).toMatch(/^Add-in over https: not started, it needs localhost\.crt, localhost\.key in /);
    } finally {
      await s.close();
    }
  });

  it("the real npm start (no build) in an empty home folder prints its addresses, no error, calls no sudo and writes nothing there", async () => {
    const home = fs.mkdtempSync(path.join(os.tmpdir(), "elx-home-"));
    const held = await holdPort();
    fs.mkdirSync(path.join(home, "bin"));
    fs.writeFileSync(path.join(home, "bin", "sudo"), `#!/bin/sh\necho called > "${path.join(home, "sudo-called")}"\n`, { mode: 0o755 });
    const child = spawn(process.execPath, [path.join(ROOT, "scripts", "start.js"), "--no-build"], {
      cwd: ROOT,
      // a sudo first on PATH that records any call to it
      env: { ...process.env, HOME: home, ELX_PREVIEW_PORT: String(held.port), PATH: `${path.join(home, "bin")}:${process.env.PATH}` },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let out = "";
    let err = "";
    child.stdout.on("data", (c) => (out += c));
    child.stderr.on("data", (c) => (err += c));
    try {
      await new Promise<void>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`npm start printed no "Press Ctrl+C" line; it printed:\n${out}\n${err}`)), 20000);
        child.stdout.on("data", () => {
          if (out.includes("Press Ctrl+C to stop.")) {
            clearTimeout(timer);
            resolve();
          }
        });
        child.on("exit", (code) => reject(new Error(`npm start exited (${code}):\n${out}\n${err}`)));
      });
      const lines = out.trim().split("\n");
      expect(lines[0]).toMatch(new RegExp(`^Port ${held.port} is in use by another program: the preview is on port (\\d+) instead`));
      const port = Number(/on port (\d+) instead/.exec(lines[0])![1]);
      expect(port).toBeGreaterThan(held.port);
      expect(lines[1]).toBe(`Preview (demo data, live formulas, the pane):  http://127.0.0.1:${port}/preview.html`);
      expect(lines[2]).toMatch(/^Add-in over https: not started, it needs ca\.crt, localhost\.crt, localhost\.key in .*; .*The preview works without them\.$/);
      expect(lines[3]).toMatch(/^Manifest to sideload: +.*manifest\.xml$/);
      expect(lines[4]).toBe("Press Ctrl+C to stop.");
      expect(err).toBe("");
      expect((await raw(port, "/preview.html")).status).toBe(200);
      expect((await raw(port, "/a%00b")).status).toBe(400);
      expect((await raw(port, "/preview.html")).status).toBe(200);
      expect(fs.readdirSync(home).sort()).toEqual(["bin"]); // no certificate folder, no sudo call
    } finally {
      const exited = new Promise<number | null>((r) => child.once("exit", (code) => r(code)));
      if (child.exitCode === null) child.kill("SIGTERM");
      const code = await exited;
      await held.release();
      fs.rmSync(home, { recursive: true, force: true });
      expect(code).toBe(0);
    }
  }, 30000);
});

describe("npm start with certificates", () => {
  it("serves the add-in over https with the files of the certificate folder", async () => {
    const s = await startServers({ dist, previewPort: 0, addinPort: 0, certDir: TLS });
    try {
      expect(s.addin).not.toBeNull();
      expect(s.lines[1]).toBe(`Add-in for the spreadsheet host:               ${s.addin!.url}/taskpane.html`);
      expect(await httpsGet(s.addin!.port, "/taskpane.html")).toBe(200);
      expect(await httpsGet(s.addin!.port, "/a%00b")).toBe(400);
      expect(await httpsGet(s.addin!.port, "/taskpane.html")).toBe(200);
    } finally {
      await s.close();
    }
  });

  it("on a taken add-in port, says which port and why it cannot move, and still serves the preview", async () => {
    const held = await holdPort();
    try {
      const s = await startServers({ dist, previewPort: 0, addinPort: held.port, certDir: TLS });
      try {
        expect(s.addin).toBeNull();
        expect(s.lines[1]).toBe(
          `Add-in over https: not started, port ${held.port} is in use by another program, and the manifest tells the host to load the add-in from https://localhost:${held.port}: stop that program and run npm start again. The preview works without it.`,
        );
        expect((await raw(s.preview.port, "/preview.html")).status).toBe(200);
      } finally {
        await s.close();
      }
    } finally {
      await held.release();
    }
  });

  it("files that are not a certificate and key give a plain line, not a stack", async () => {
    const bad = path.join(dir, "bad-certs");
    fs.mkdirSync(bad);
    for (const f of ["ca.crt", "localhost.crt", "localhost.key"]) fs.writeFileSync(path.join(bad, f), "not a certificate");
    const s = await startServers({ dist, previewPort: 0, addinPort: 0, certDir: bad });
    try {
      expect(s.addin).toBeNull();
      expect(s.lines[1]).toMatch(/^Add-in over https: not started, the files in .* could not be used as a certificate and key \(.+\); make them again with `npx office-addin-dev-certs install`\. The preview works without them\.$/);
    } finally {
      await s.close();
    }
  });

  it("a preview port still taken after the ten next ones is an error that says how to choose another", async () => {
    const held: { port: number; release: () => Promise<void> }[] = [];
    const first = await holdPort();
    held.push(first);
    try {
      for (let p = first.port + 1; p <= first.port + 10; p++) held.push(await holdPort(p).catch(() => ({ port: p, release: async () => undefined })));
      await expect(startServers({ dist, previewPort: first.port, certDir: noCerts })).rejects.toThrow(
        `Preview not started: ports ${first.port} to ${first.port + 10} are already in use on 127.0.0.1 by another program. Choose another port, for example ELX_PREVIEW_PORT=4001 npm start.`,
      );
    } finally {
      for (const h of held) await h.release();
    }
  });
});
