/*
 * A small static file server for dist/ (no dependencies): used by `npm start` (scripts/start.js),
 * the browser tests (test/browser) and the pane benchmark (scripts/bench-pane.js). Binds to
 * 127.0.0.1 only; serves files under the root folder and nothing else; no caching, so a rebuilt
 * bundle is picked up at once.
 */
"use strict";

const fs = require("fs");
const http = require("http");
const https = require("https");
const path = require("path");

const TYPES = {
  ".html": "text/html; charset=utf-8",
  ".js": "text/javascript; charset=utf-8",
  ".json": "application/json; charset=utf-8",
  ".xml": "application/xml; charset=utf-8",
  ".css": "text/css; charset=utf-8",
  ".png": "image/png",
  ".svg": "image/svg+xml",
  ".txt": "text/plain; charset=utf-8",
  ".map": "application/json; charset=utf-8",
};

function handler(root) {
  const base = path.resolve(root);
  return (req, res) => {
    let pathname;
    try {
      pathname = decodeURIComponent(new URL(req.url, "http://127.0.0.1").pathname);
    } catch {
      res.writeHead(400).end("bad request");
      return;
    }
    if (pathname === "/") pathname = "/preview.html";
    const file = path.resolve(base, "." + pathname);
    if (file !== base && !file.startsWith(base + path.sep)) {
      res.writeHead(403).end("forbidden");
      return;
    }
    fs.readFile(file, (err, body) => {
      if (err) {
        res.writeHead(404, { "content-type": "text/plain; charset=utf-8" }).end("not found");
        return;
      }
      res.writeHead(200, { "content-type": TYPES[path.extname(file)] || "application/octet-stream", "cache-control": "no-store" });
      res.end(body);
    });
  };
}

/**
 * Starts a server on 127.0.0.1.
 * @param {{ root: string, port?: number, tls?: { key: Buffer, cert: Buffer, ca?: Buffer } }} options port 0 picks a free port
 * @returns {Promise<{ server: import("http").Server, port: number, url: string, close: () => Promise<void> }>}
 */
function serve({ root, port = 0, tls = null }) {
  const server = tls ? https.createServer(tls, handler(root)) : http.createServer(handler(root));
  return new Promise((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, "127.0.0.1", () => {
      const actual = server.address().port;
      resolve({
        server,
        port: actual,
        url: `${tls ? "https" : "http"}://${tls ? "localhost" : "127.0.0.1"}:${actual}`,
        close: () => new Promise((r) => server.close(() => r())),
      });
    });
  });
}

module.exports = { serve };
