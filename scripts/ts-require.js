/*
 * Lets plain Node require the engine's TypeScript sources without a build step: each .ts file is
 * transpiled on load with the TypeScript compiler already in devDependencies (transpileModule: no
 * type check, CommonJS output). Used by scripts/bench-panel.js.
 */
"use strict";
const fs = require("fs");
const ts = require("typescript");

require.extensions[".ts"] = function compileTs(module, filename) {
  const source = fs.readFileSync(filename, "utf8");
  const out = ts.transpileModule(source, {
    fileName: filename,
    compilerOptions: { module: ts.ModuleKind.CommonJS, target: ts.ScriptTarget.ES2019, esModuleInterop: true },
  });
  module._compile(out.outputText, filename);
};
