/** Jest configuration: TypeScript through ts-jest; host-door tests load the built dist/functions.js. */
module.exports = {
  testEnvironment: "node",
  roots: ["<rootDir>/test"],
  testMatch: ["**/*.test.ts"],
  transform: { "^.+\\.ts$": ["ts-jest", { diagnostics: { warnOnly: false } }] },
  moduleNameMapper: {
    // office-addin-mock imports office-addin-manifest, whose dependencies are ESM-only; the mock
    // needs only this self-contained enum file.
    "^office-addin-manifest$": require.resolve("office-addin-manifest/lib/officeApp.js"),
  },
  testTimeout: 60000,
};
