/** Raw HTTP requests and held ports for the server tests (test/scripts). */
import * as http from "http";
import * as net from "net";

/** One request with the path sent byte for byte as given (no client-side normalisation). */
export function raw(port: number, rawPath: string, method = "GET"): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = http.request({ host: "127.0.0.1", port, path: rawPath, method, agent: false }, (res) => {
      let body = "";
      res.setEncoding("utf8");
      res.on("data", (c) => (body += c));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, body }));
    });
    req.on("error", reject);
    req.end();
  });
}

/** A port held by another listener for the duration of a test. */
export async function holdPort(port = 0): Promise<{ port: number; release: () => Promise<void> }> {
  const blocker = net.createServer();
  await new Promise<void>((r, j) => blocker.once("error", j).listen(port, "127.0.0.1", () => r()));
  return { port: (blocker.address() as net.AddressInfo).port, release: () => new Promise((r) => blocker.close(() => r())) };
}
