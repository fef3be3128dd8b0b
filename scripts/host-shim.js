/**
 * The host's custom-functions registration path for plain Node scripts (demo, benchmark): a global
 * CustomFunctions whose associate(id, fn) fills a registry, with the host's Error class and ErrorCode
 * values. The tests use the TypeScript twin, test/harness/loadFunctions.ts.
 */
const fs = require("fs");
const path = require("path");

class HostError {
  constructor(code, message) {
    this.code = code;
    this.message = message;
  }
}

const ERROR_CODES = {
  invalidValue: "#VALUE!",
  notAvailable: "#N/A",
  divisionByZero: "#DIV/0!",
  invalidNumber: "#NUM!",
  nullReference: "#NULL!",
  invalidName: "#NAME?",
  invalidReference: "#REF!",
};

/** Evaluates the bundle and returns the id → function registry (exits with a message if it is missing). */
function loadFunctions(bundle) {
  if (!fs.existsSync(bundle)) {
    process.stderr.write(`${path.relative(process.cwd(), bundle)} is missing: run npm run build first\n`);
    process.exit(1);
  }
  const registry = new Map();
  globalThis.CustomFunctions = {
    associate(a, f) {
      if (typeof a === "string") registry.set(a, f);
      else for (const k of Object.keys(a)) registry.set(k, a[k]);
    },
    Error: HostError,
    ErrorCode: ERROR_CODES,
  };
  const resolved = require.resolve(bundle);
  delete require.cache[resolved];
  require(resolved);
  return registry;
}

module.exports = { HostError, ERROR_CODES, loadFunctions };
