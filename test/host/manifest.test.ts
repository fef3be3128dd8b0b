/**
 * The add-in manifest (manifest/manifest.xml) agrees with the build: namespace ELX, one shared runtime
 * whose resid is used by the Runtime, the functions Page, the FunctionFile and the pane button (the
 * platform's rule for a shared runtime), resids within 32 characters, and every URL on the served
 * origin. Schema validation needs the network; this is the offline check.
 */
import * as fs from "fs";
import * as path from "path";
import { metadataIds } from "../harness/loadFunctions";

const xml = fs.readFileSync(path.resolve(__dirname, "../../manifest/manifest.xml"), "utf8");
const attr = (re: RegExp) => [...xml.matchAll(re)].map((m) => m[1]);

describe("manifest", () => {
  it("declares the ELX namespace for the custom functions", () => {
    const nsRes = attr(/<Namespace resid="([^"]+)"/g)[0];
    expect(xml).toMatch(new RegExp(`<bt:String id="${nsRes}" DefaultValue="ELX"/>`));
  });

  it("uses one resid for the shared runtime, the functions page, the function file and the pane", () => {
    const runtime = attr(/<Runtime resid="([^"]+)"/g);
    expect(runtime).toHaveLength(1);
    const page = attr(/<Page>\s*<SourceLocation resid="([^"]+)"/g);
    const fnFile = attr(/<FunctionFile resid="([^"]+)"/g);
    const action = attr(/<Action xsi:type="ShowTaskpane">\s*<SourceLocation resid="([^"]+)"/g);
    expect(new Set([...runtime, ...page, ...fnFile, ...action])).toEqual(new Set(runtime));
    expect(xml).not.toMatch(/TaskpaneId/);
  });

  it("defines every resid it uses, each within 32 characters, and serves everything from one https origin", () => {
    const used = new Set(attr(/resid="([^"]+)"/g));
    const defined = new Set(attr(/<bt:(?:Url|String|Image) id="([^"]+)"/g));
    for (const r of used) {
      expect(defined.has(r)).toBe(true);
      expect(r.length).toBeLessThanOrEqual(32);
    }
    for (const url of attr(/DefaultValue="(https?:[^"]+)"/g)) expect(url.startsWith("https://localhost:3000/")).toBe(true);
  });

  it("points at the built functions.js and functions.json, which list the functions", () => {
    expect(xml).toMatch(/DefaultValue="https:\/\/localhost:3000\/functions\.js"/);
    expect(xml).toMatch(/DefaultValue="https:\/\/localhost:3000\/functions\.json"/);
    expect(metadataIds().length).toBeGreaterThanOrEqual(13);
    expect(fs.existsSync(path.resolve(__dirname, "../../dist/manifest.xml"))).toBe(true);
  });
});
