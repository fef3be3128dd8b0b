#!/usr/bin/env node
/*
 * `npm test`: build the bundle (host-door tests load dist/functions.js), then run Jest. When
 * ELX_JEST_JSON names a file, Jest also writes its JSON report there (CI prints the
 * "N passed, N failed" line from it).
 */
const { spawnSync } = require("child_process");
const path = require("path");

const root = path.resolve(__dirname, "..");
const run = (cmd, args) => spawnSync(cmd, args, { cwd: root, stdio: "inherit", shell: false });

const build = run(process.execPath, [path.join(root, "node_modules", "webpack-cli", "bin", "cli.js"), "--mode", "production"]);
if (build.status !== 0) process.exit(build.status ?? 1);

const jestArgs = [path.join(root, "node_modules", "jest", "bin", "jest.js"), ...process.argv.slice(2)];
if (process.env.ELX_JEST_JSON) jestArgs.push("--json", `--outputFile=${process.env.ELX_JEST_JSON}`);
const jest = run(process.execPath, jestArgs);
process.exit(jest.status ?? 1);
