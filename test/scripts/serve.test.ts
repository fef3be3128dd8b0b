/**
 * The static server of `npm start`, the browser tests and the benchmark (scripts/serve.js): hostile
 * paths get a status code and the server keeps answering; a taken port is either skipped (when
 * asked) or named in the error.
 */
import * as fs from "fs";
import * as os from "os";
import * as path from "path";
import { holdPort, raw } from "../harness/net";

// eslint-disable-next-line @typescript-eslint/no-var-requires
const { serve } = require("../../scripts/serve.js") as {
  serve: (o: { root: string; port?: number; tryNext?: number }) => Promise<{ port: number; url: string; close: () => Promise<void> }>;
};

let dir: string;
let root: string;
let server: { port: number; url: string; close: () => Promise<void> };

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-serve-"));
  root = path.join(dir, "root");
  fs.mkdirSync(path.join(root, "sub"), { recursive: true });
  fs.writeFileSync(path.join(root, "preview.html"), "<p>preview</p>");
  fs.writeFileSync(path.join(root, "sub", "a.js"), "1;");
  fs.writeFileSync(path.join(dir, "secret.txt"), "outside the root");
  server = await serve({ root });
});

afterAll(async () => {
  if (server) await server.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("scripts/serve.js answers hostile paths and stays up", () => {
  it("serves a file under the root with its type, and / as the preview", async () => {
    expect(await raw(server.port, "/sub/a.js")).toEqual({ status: 200, body: "1;" });
    expect(await raw(server.port, "/")).toEqual({ status: 200, body: "<p>preview</p>" });
  });

  it.each(["/a%00b", "/%00", "/preview.html%00.js", "/sub/%00/a.js"])("a NUL byte (%s) is 400, and the server still answers", async (p) => {
    const r = await raw(server.port, p);
    expect(r.status).toBe(400);
    expect(r.body).toMatch(/NUL byte/);
    expect((await raw(server.port, "/preview.html")).status).toBe(200);
  });

  it.each(["/%E0%A4%A", "/%", "/%zz", "/%FF", "/%C0%AF", "/%ED%A0%80"])("a bad percent-encoding (%s) is 400, and the server still answers", async (p) => {
    const r = await raw(server.port, p);
    expect(r.status).toBe(400);
    expect(r.body).toMatch(/percent-encoded/);
    expect((await raw(server.port, "/preview.html")).status).toBe(200);
  });

  it.each([
    ["/..%2fsecret.txt", 403],
    ["/sub/..%2f..%2fsecret.txt", 403],
    ["/%2e%2e%2fsecret.txt", 403],
    ["/..%5c..%5csecret.txt", 404], // a backslash is an ordinary file-name character here, not a separator
    // the URL parser removes dot segments first, so these stay inside the root and find nothing
    ["/../secret.txt", 404],
    ["/%2e%2e/secret.txt", 404],
    ["/sub/../../secret.txt", 404],
  ])("a path out of the root (%s) never reaches the file outside: %i", async (p, status) => {
    const r = await raw(server.port, p);
    expect(r.status).toBe(status);
    expect(r.body).not.toContain("outside the root");
    expect((await raw(server.port, "/preview.html")).status).toBe(200);
  });

  it("a missing file or a folder is 404, another method is 405", async () => {
    expect((await raw(server.port, "/nothing.js")).status).toBe(404);
    expect((await raw(server.port, "/sub")).status).toBe(404);
    expect((await raw(server.port, "/preview.html", "POST")).status).toBe(405);
    expect((await raw(server.port, "/preview.html", "HEAD")).status).toBe(200);
  });
});

describe("scripts/serve.js on a taken port", () => {
  it("names the taken port in a plain error (code EADDRINUSE) when not asked to move on", async () => {
    const held = await holdPort();
    try {
      await expect(serve({ root, port: held.port })).rejects.toMatchObject({ code: "EADDRINUSE", message: `port ${held.port} is already in use on 127.0.0.1 by another program` });
    } finally {
      await held.release();
    }
  });

  it("with tryNext, takes the next free port and serves there", async () => {
    const held = await holdPort();
    try {
      const s = await serve({ root, port: held.port, tryNext: 10 });
      try {
        expect(s.port).toBeGreaterThan(held.port);
        expect(s.port).toBeLessThanOrEqual(held.port + 10);
        expect(s.url).toBe(`http://127.0.0.1:${s.port}`);
        expect((await raw(s.port, "/preview.html")).status).toBe(200);
      } finally {
        await s.close();
      }
    } finally {
      await held.release();
    }
  });
});
