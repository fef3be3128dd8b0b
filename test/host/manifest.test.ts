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

/** The manifest's elements as a tree (tags, attributes, children; comments and text left out): enough to check structure offline. */
interface Node {
  name: string;
  attrs: Record<string, string>;
  children: Node[];
}
function parseXml(text: string): Node {
  const root: Node = { name: "#root", attrs: {}, children: [] };
  const stack = [root];
  const body = text.replace(/<!--[\s\S]*?-->/g, "").replace(/<\?[\s\S]*?\?>/g, "");
  for (const m of body.matchAll(/<(\/?)([A-Za-z_][\w:.-]*)((?:\s+[\w:.-]+="[^"]*")*)\s*(\/?)>/g)) {
    const [, close, name, attrText, selfClose] = m;
    if (close) {
      const top = stack.pop() as Node;
      if (top.name !== name) throw new Error(`</${name}> closes <${top.name}>`);
      continue;
    }
    const attrs = Object.fromEntries([...attrText.matchAll(/([\w:.-]+)="([^"]*)"/g)].map((a) => [a[1], a[2]]));
    const node: Node = { name, attrs, children: [] };
    stack[stack.length - 1].children.push(node);
    if (!selfClose) stack.push(node);
  }
  if (stack.length !== 1) throw new Error(`<${stack[stack.length - 1].name}> is not closed`);
  return root;
}
function all(n: Node, name: string): Node[] {
  return [...(n.name === name ? [n] : []), ...n.children.flatMap((c) => all(c, name))];
}

describe("the ribbon", () => {
  const tree = parseXml(xml);
  const strings = new Map(all(tree, "bt:String").map((s) => [s.attrs.id, s.attrs.DefaultValue]));

  it("puts Elasticell's button on a tab of its own (a CustomTab), not on a built-in tab such as Data", () => {
    expect(all(tree, "OfficeTab")).toEqual([]);
    const surfaces = all(tree, "ExtensionPoint").filter((e) => e.attrs["xsi:type"] === "PrimaryCommandSurface");
    expect(surfaces).toHaveLength(1);
    const tabs = surfaces[0].children;
    expect(tabs.map((t) => t.name)).toEqual(["CustomTab"]);
    const tab = tabs[0];
    // Our own id, not a built-in tab's (TabHome, TabData, …), within the schema's 125 characters.
    expect(tab.attrs.id).toMatch(/^Elx\./);
    expect(tab.attrs.id.length).toBeLessThanOrEqual(125);
    // The schema's order: the groups first, then the tab's label (no InsertAfter: the host places a custom tab itself).
    expect(tab.children.map((c) => c.name)).toEqual(["Group", "Label"]);
    expect(strings.get(tab.children[1].attrs.resid)).toBe("Elasticell");
  });

  it("has on that tab a group with the button that opens the pane, each id unique", () => {
    const tab = all(tree, "CustomTab")[0];
    const group = tab.children[0];
    expect(group.children.map((c) => c.name)).toEqual(["Label", "Icon", "Control"]);
    const control = group.children[2];
    expect(control.attrs["xsi:type"]).toBe("Button");
    expect(strings.get(all(control, "Label")[0].attrs.resid)).toBe("Elasticity check");
    const action = all(control, "Action")[0];
    expect(action.attrs["xsi:type"]).toBe("ShowTaskpane");
    const ids = [tab, ...all(tab, "Group"), ...all(tab, "Control")].map((n) => n.attrs.id);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it("tells a newcomer where the button is, in the getting-started text", () => {
    const text = strings.get(all(tree, "GetStarted")[0].children.find((c) => c.name === "Description")?.attrs.resid ?? "");
    expect(text).toContain("Elasticell tab");
    expect(text).not.toContain("Data tab");
  });
});
