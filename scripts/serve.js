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
  // WebAssembly.instantiateStreaming accepts only this type
  ".wasm": "application/wasm",
};

/** A plain-text answer with a status code (no body for HEAD). */
function answer(req, res, status, text) {
  res.writeHead(status, { "content-type": "text/plain; charset=utf-8", "cache-control": "no-store" });
  res.end(req.method === "HEAD" ? undefined : text);
}

function handler(root) {
  const respond = files(root);
  return (req, res) => {
    try {
      respond(req, res);
    } catch (e) {
      // Whatever a request holds, the server answers and stays up.
      if (!res.headersSent) answer(req, res, 500, "server error");
      else res.destroy();
    }
  };
}

function files(root) {
  const base = path.resolve(root);
  return (req, res) => {
    if (req.method !== "GET" && req.method !== "HEAD") {
      res.setHeader("allow", "GET, HEAD");
      answer(req, res, 405, "only GET and HEAD are served");
      return;
    }
    let pathname;
    try {
      pathname = decodeURIComponent(new URL(req.url, "http://127.0.0.1").pathname);
    } catch {
      answer(req, res, 400, "bad request: the path is not valid percent-encoded UTF-8");
      return;
    }
    // A NUL byte is no file name (the file system calls throw on it).
    if (pathname.includes("\0")) {
      answer(req, res, 400, "bad request: the path contains a NUL byte");
      return;
    }
    if (pathname === "/") pathname = "/preview.html";
    const file = path.resolve(base, "." + pathname);
    if (file !== base && !file.startsWith(base + path.sep)) {
      answer(req, res, 403, "forbidden: outside the served folder");
      return;
    }
    fs.readFile(file, (err, body) => {
      if (err) {
        answer(req, res, 404, "not found");
        return;
      }
      res.writeHead(200, { "content-type": TYPES[path.extname(file)] || "application/octet-stream", "cache-control": "no-store" });
      res.end(req.method === "HEAD" ? undefined : body);
    });
  };
}

function listenOnce(server, port) {
  return new Promise((resolve, reject) => {
    const onError = (e) => {
      server.removeListener("listening", onListening);
      reject(e);
    };
    const onListening = () => {
      server.removeListener("error", onError);
      resolve();
    };
    server.once("error", onError);
    server.once("listening", onListening);
    server.listen(port, "127.0.0.1");
  });
}

/**
 * Starts a server on 127.0.0.1.
 * @param {{ root: string, port?: number, tls?: { key: Buffer, cert: Buffer, ca?: Buffer }, tryNext?: number }} options
 *   port 0 picks a free port; when the port is taken, the next `tryNext` ports (default 0) are tried
 *   in turn. A port still taken rejects with an Error whose code is EADDRINUSE and whose message
 *   names the port.
 * @returns {Promise<{ server: import("http").Server, port: number, requested: number, url: string, close: () => Promise<void> }>}
 */
async function serve({ root, port = 0, tls = null, tryNext = 0 }) {
  const server = tls ? https.createServer(tls, handler(root)) : http.createServer(handler(root));
  // A connection that breaks mid-request must not take the server down.
  server.on("clientError", (_e, socket) => {
    if (socket.writable) socket.end("HTTP/1.1 400 Bad Request\r\nconnection: close\r\n\r\n");
    else socket.destroy();
  });
  let actual = null;
  for (let p = port; actual === null; p++) {
    try {
      await listenOnce(server, p);
      actual = server.address().port;
    } catch (e) {
      if (e && e.code === "EADDRINUSE" && port !== 0 && p < port + tryNext) continue;
      if (e && e.code === "EADDRINUSE") {
        const span = p === port ? `port ${port} is` : `ports ${port} to ${p} are`;
        const err = new Error(`${span} already in use on 127.0.0.1 by another program`);
        err.code = "EADDRINUSE";
        err.port = p;
        throw err;
      }
      throw e;
    }
  }
  return {
    server,
    port: actual,
    requested: port,
    url: `${tls ? "https" : "http"}://${tls ? "localhost" : "127.0.0.1"}:${actual}`,
    close: () =>
      new Promise((r) => {
        server.close(() => r());
        server.closeAllConnections();
      }),
  };
}

module.exports = { serve };
