/*
 * Build: dist/functions.js (the custom functions bundle, registers every function through the global
 * CustomFunctions.associate and touches no DOM while loading), dist/functions.json (generated from the
 * JSDoc by the metadata plugin, never written by hand), dist/taskpane.html (+ taskpane.js, the shared
 * runtime page), dist/fitWorker.js (the fit worker: the engine modules only, no cell functions, no
 * host registration, no DOM; started by the pane with new Worker) and dist/manifest.xml.
 */
const path = require("path");
const webpack = require("webpack");
const CustomFunctionsMetadataPlugin = require("custom-functions-metadata-plugin");
const HtmlWebpackPlugin = require("html-webpack-plugin");
const CopyWebpackPlugin = require("copy-webpack-plugin");

/** Lets `any` parameters receive error cells (so intake can count them) instead of the host skipping the call. */
class AllowErrorInputs {
  apply(compiler) {
    compiler.hooks.thisCompilation.tap("AllowErrorInputs", (compilation) => {
      compilation.hooks.processAssets.tap(
        { name: "AllowErrorInputs", stage: webpack.Compilation.PROCESS_ASSETS_STAGE_ADDITIONS },
        () => {
          const asset = compilation.getAsset("functions.json");
          if (!asset) return;
          const meta = JSON.parse(asset.source.source().toString());
          meta.allowErrorForDataTypeAny = true;
          compilation.updateAsset("functions.json", new webpack.sources.RawSource(JSON.stringify(meta, null, 2)));
        },
      );
    });
  }
}

module.exports = (env, argv) => ({
  target: ["web", "es2017"],
  devtool: argv.mode === "production" ? false : "source-map",
  entry: {
    functions: "./functions/functions.ts",
    taskpane: "./taskpane/taskpane.ts",
    // The preview workbook (not part of the add-in): host stand-ins first, the sheet view last.
    "office-stub": "./preview/officeStub.ts",
    preview: "./preview/preview.ts",
    // The fit worker: a page of its own, listed in no HtmlWebpackPlugin's chunks.
    fitWorker: "./functions/parallel/fitWorker.ts",
    // The big-fit session on a global, for the browser test only (no page includes it).
    bigFitCheck: "./functions/parallel/pageCheck.ts",
  },
  output: { path: path.resolve(__dirname, "dist"), filename: "[name].js", clean: true },
  resolve: { extensions: [".ts", ".js"] },
  module: {
    rules: [
      { test: /\.ts$/, exclude: /node_modules/, use: "ts-loader" },
      // Style sheets as text: the pane and the preview put them into a <style> element themselves.
      { test: /\.css$/, type: "asset/source" },
    ],
  },
  performance: { hints: false },
  plugins: [
    new CustomFunctionsMetadataPlugin({ input: "./functions/functions.ts", output: "functions.json" }),
    new AllowErrorInputs(),
    new HtmlWebpackPlugin({
      filename: "taskpane.html",
      template: "./taskpane/taskpane.html",
      chunks: ["functions", "taskpane"],
      inject: "body",
      scriptLoading: "blocking",
    }),
    // preview.html: the same functions.js and taskpane.js as the add-in, after the host stand-ins.
    new HtmlWebpackPlugin({
      filename: "preview.html",
      template: "./preview/preview.html",
      chunks: ["office-stub", "functions", "taskpane", "preview"],
      chunksSortMode: "manual",
      inject: "body",
      scriptLoading: "blocking",
    }),
    new CopyWebpackPlugin({ patterns: [{ from: "manifest/manifest.xml", to: "manifest.xml" }, { from: "assets", to: "assets" }] }),
  ],
  devServer: {
    static: { directory: path.resolve(__dirname, "dist") },
    host: "127.0.0.1",
    port: 3000,
    hot: false,
    liveReload: false,
    client: false,
  },
});
