#!/usr/bin/env node
/*
 * `npm test`: build the bundle (host-door tests load dist/functions.js), then run Jest. When
 * ELX_JEST_JSON names a file, Jest's JSON report goes there (CI prints the "N passed, N failed" line
 * from it).
 *
 * Without arguments, first the big-range browser suite alone (test/browser/bigRange.test.ts), which
 * measures the page's main thread's longest task during the 200,000-row pane fit: that bound is about
 * the page's own work, and with a test run beside it on two cores the page's thread waits for a core
 * (measured: tasks of 50 to 230 ms in 4 of 14 runs beside another browser suite; a 79 ms task beside
 * the Node suites on a busy day, none when alone). Then two Jest runs side by side, one core each: the
 * other browser suites one after another, and every other suite; the second run's output is printed
 * when it ends.
 * With arguments (`npm test -- test/engine`), one Jest run with them, as Jest's own command line.
 */
const { spawn, spawnSync } = require("child_process");
const fs = require("fs");
const os = require("os");
const path = require("path");

const root = path.resolve(__dirname, "..");
const jestBin = path.join(root, "node_modules", "jest", "bin", "jest.js");

const build = spawnSync(process.execPath, [path.join(root, "node_modules", "webpack-cli", "bin", "cli.js"), "--mode", "production"], { cwd: root, stdio: "inherit" });
if (build.status !== 0) process.exit(build.status ?? 1);

const report = process.env.ELX_JEST_JSON;
const extra = process.argv.slice(2);

if (extra.length > 0) {
  const args = [jestBin, ...extra];
  if (report) args.push("--json", `--outputFile=${report}`);
  const jest = spawnSync(process.execPath, args, { cwd: root, stdio: "inherit" });
  process.exit(jest.status ?? 1);
}

/** Starts one Jest run; `live` prints as it goes, otherwise the output is kept for the end. */
function jestRun(name, args, live) {
  const out = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "elx-jest-")), `${name}.json`);
  const child = spawn(process.execPath, [jestBin, ...args, "--json", `--outputFile=${out}`], { cwd: root, stdio: live ? "inherit" : ["ignore", "pipe", "pipe"] });
  const kept = [];
  if (!live) {
    child.stdout.on("data", (d) => kept.push(d));
    child.stderr.on("data", (d) => kept.push(d));
  }
  return new Promise((resolve) => {
    child.on("close", (code, signal) => {
      let json = null;
      try {
        json = JSON.parse(fs.readFileSync(out, "utf8"));
      } catch {
        json = null;
      }
      resolve({ name, code: code ?? (signal ? 1 : 0), output: Buffer.concat(kept).toString("utf8"), json });
    });
  });
}

(async () => {
  const BIG = "test/browser/bigRange.test.ts";
  const alone = await jestRun("big range", ["--runInBand", "--testPathPatterns", BIG], true);
  const browser = jestRun("browser", ["--runInBand", "--testPathPatterns", "test/browser/", "--testPathIgnorePatterns", BIG], true);
  const rest = jestRun("rest", ["--runInBand", "--testPathIgnorePatterns", "test/browser/"], false);
  const runs = [alone, ...(await Promise.all([browser, rest]))];
  const other = runs[2];
  process.stderr.write(`\n── the other Jest run (every suite outside test/browser/) ──\n${other.output}`);
  const sum = (k) => runs.reduce((s, r) => s + (r.json ? r.json[k] || 0 : 0), 0);
  const missing = runs.filter((r) => !r.json).map((r) => r.name);
  const merged = {
    success: runs.every((r) => r.code === 0 && r.json && r.json.success),
    numTotalTestSuites: sum("numTotalTestSuites"),
    numPassedTestSuites: sum("numPassedTestSuites"),
    numFailedTestSuites: sum("numFailedTestSuites") + missing.length,
    numTotalTests: sum("numTotalTests"),
    numPassedTests: sum("numPassedTests"),
    numFailedTests: sum("numFailedTests") + missing.length,
    numPendingTests: sum("numPendingTests"),
    testResults: runs.flatMap((r) => (r.json ? r.json.testResults : [])),
  };
  const failedSuites = merged.testResults.filter((t) => t.status === "failed").map((t) => path.relative(root, t.name));
  process.stderr.write(
    `\nAll three runs: ${merged.numPassedTestSuites} of ${merged.numTotalTestSuites} suites passed; ${merged.numPassedTests} tests passed, ${merged.numFailedTests} failed` +
      (merged.numPendingTests ? `, ${merged.numPendingTests} skipped` : "") +
      (failedSuites.length ? `\nFailed suites: ${failedSuites.join(", ")}` : "") +
      (missing.length ? `\nNo report from the ${missing.join(" and ")} run (it stopped before writing one).` : "") +
      "\n",
  );
  if (report) fs.writeFileSync(report, JSON.stringify(merged));
  process.exit(merged.success ? 0 : 1);
})();
