/*
 * The Elasticell pane (shared runtime with the custom functions). It reads the y and x ranges through
 * taskpane/host.ts, checks the data (taskpane/check.ts), reads fits through the functions' own global
 * (globalThis.Elasticell, published by functions.js: the same cache the cells use), draws the pictures
 * (taskpane/charts.ts) and writes a block of ELX formulas (taskpane/formulas.ts) only when asked and
 * only into empty cells. It builds its own DOM inside #elx-pane, so the host page and the preview
 * page show the same pane.
 *
 * Long work is split into steps that yield to the page, with a progress bar after half a second.
 */
import css from "./pane.css";
import { engineValues, Host, hostRunner, type RangeSnapshot } from "./host";
import { checkData, yieldToPage, type CheckResult, type Estimator, type Form } from "./check";
import { intervalPlot, normalQuantile, pathPlot, quantilePlot, residualPlot, shortNumber, type IntervalRow, type PathPoint } from "./charts";
import { CAUTIONS, formAssumptions, smearingNote, testReadings } from "./assumptions";
import { buildBlock, type BlockItem } from "./formulas";
import { detectRoles, instrumentParagraph, keySentence, optionSafe, roleAssumptions, roleColumns, roleOptions, type ColumnRoles, type RoleChoices } from "./roles";
import { formatAddress, parseAddress, rowCount, columnCount, type Address } from "./address";
import { countFilled, needsChunks, planChunks, readChunks, type BigPlan, type ColumnTally } from "./chunks";
import { bigRefusal, REGISTRY_KEY, resultsParts, specOf, specOptions, stamp, talliesHtml, valuesBlock, type BigChoices, type BigRun, type ValuesEntry } from "./bigResults";
import { openSession } from "./bigSession";
import type { ColumnFitResult, ColumnFitSpec } from "../functions/engine/columnFitTypes";
// Types only: the pane reads the functions' published object at run time, never their modules.
import type { ElasticellApi, ElasticitiesView, Outcome } from "../functions/paneApi";
import type { Origin } from "../functions/engine/intake";

type EngineApi = ElasticellApi;

function engine(): EngineApi | null {
  const e = (globalThis as unknown as { Elasticell?: EngineApi }).Elasticell;
  return e && typeof e.call === "function" ? e : null;
}

export interface Choices {
  form: Form;
  estimator: Estimator;
  se: string;
  zeros: string;
  level: string;
  /** Option words of the role choices (absorb=, cluster=, weights=, time=, the 2SLS words): see taskpane/roles.ts. */
  roles?: string[];
}

/**
 * The options text for the chosen controls (estimator only when not the default). A cluster= choice
 * writes se=cluster in place of the chosen se; under 2SLS, HC2 and HC3 become HC1 (2SLS offers
 * classical, HC0, HC1, cluster, HAC and DK).
 */
export function optionsText(c: Choices, override: Partial<Choices> = {}): string {
  const o = { ...c, ...override };
  const roles = o.roles ?? [];
  const parts = [`form=${o.form}`];
  if (o.estimator === "ppml") parts.push("estimator=ppml");
  const twoStage = roles.includes("estimator=2sls") && o.estimator !== "ppml";
  const se = roles.some((w) => w.startsWith("cluster=")) ? "cluster" : twoStage && (o.se === "HC2" || o.se === "HC3") ? "HC1" : o.se;
  parts.push(`se=${se}`, `zeros=${o.zeros}`, `level=${o.level}`);
  for (const w of roles) if (w !== "estimator=2sls" || twoStage) parts.push(w);
  return parts.join("; ");
}

/** Covariance types the engine offers with estimator=ppml (its default is HC1). */
export const PPML_SE = ["HC1", "HC0", "classical"];

/** The standard errors to use for PPML: the chosen ones when PPML offers them, else its default HC1. */
export function ppmlSe(se: string): string {
  return PPML_SE.includes(se) ? se : "HC1";
}

const esc = (s: unknown): string => String(s).replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
const fmt = (n: number): string => n.toLocaleString("en-GB");
/** A confidence level as the interval headers show it: 0.95 → "95%", 0.999 → "99.9%". */
export const percent = (level: number): string => `${Number((level * 100).toPrecision(6))}%`;
const pText = (p: unknown): string => (typeof p === "number" && Number.isFinite(p) ? (p < 0.0001 ? "p < 0.0001" : `p = ${p.toFixed(4)}`) : "p not available");
const cellText = (v: unknown): string => (typeof v === "number" ? (Number.isFinite(v) ? shortNumber(v) : "–") : v && typeof v === "object" ? "n/a" : String(v ?? ""));

function table2d(v: unknown): unknown[][] | null {
  return Array.isArray(v) && v.every((r) => Array.isArray(r)) ? (v as unknown[][]) : null;
}

export interface Timings {
  read: number;
  check: number;
  pictures: number;
  choices: number;
  assumptions: number;
  total: number;
}

const WRITE_BEFORE_CHECK = "After a check that passes, writes ELX.FIT, ELX.ELASTICITIES, ELX.EFFECTS (when x has a binary column and y is logged), ELX.TESTS (least squares) and ELX.SUMMARY for the checked ranges and options, so the results live in the workbook and recalculate with the data. Only empty cells are used.";

const TEMPLATE = `
<header>
  <h1>Elasticell</h1>
  <p class="elx-sub">See what a log does to your ranges, and what the model assumes, before trusting a number.</p>
</header>
<section aria-labelledby="elx-h-ranges">
  <h2 id="elx-h-ranges">Ranges and model</h2>
  <div class="elx-field">
    <label for="elx-y">y: the dependent variable (one column, header on top)</label>
    <div class="elx-inline"><input id="elx-y" type="text" spellcheck="false" autocomplete="off" placeholder="e.g. Sales!C1:C1249" />
    <button type="button" id="elx-y-sel" aria-describedby="elx-sel-note">Use selection</button></div>
  </div>
  <div class="elx-field">
    <label for="elx-x">x: the regressors (one or more columns, same rows)</label>
    <div class="elx-inline"><input id="elx-x" type="text" spellcheck="false" autocomplete="off" placeholder="e.g. Sales!D1:G1249" />
    <button type="button" id="elx-x-sel" aria-describedby="elx-sel-note">Use selection</button></div>
  </div>
  <p id="elx-sel-note" class="elx-muted">"Use selection" copies the selected cells' address. A first row that is all text is read as the header row.</p>
  <div class="elx-options">
    <div><label for="elx-form">Form (y – x)</label>
      <select id="elx-form"><option value="log-log">log y – log x</option><option value="log-level">log y – x in levels</option><option value="level-log">y in levels – log x</option><option value="level-level">levels – levels</option></select></div>
    <div><label for="elx-estimator">Estimator</label>
      <select id="elx-estimator"><option value="ols">least squares</option><option value="ppml">PPML (keeps zero y)</option></select></div>
    <div><label for="elx-zeros">Zeros under a log</label>
      <select id="elx-zeros"><option value="stop">stop and tell me</option><option value="drop">leave them out</option><option value="shift">log(v + 1)</option><option value="ihs">inverse hyperbolic sine</option></select></div>
    <div><label for="elx-se">Standard errors</label>
      <select id="elx-se"><option>HC3</option><option>HC1</option><option>HC0</option><option>HC2</option><option value="classical">classical</option><option value="HAC">HAC (weekly series)</option></select></div>
    <div><label for="elx-level">Interval level</label>
      <select id="elx-level"><option value="0.9">90%</option><option value="0.95" selected>95%</option><option value="0.99">99%</option></select></div>
    <div><label for="elx-absorb">Fixed effects (absorb)</label>
      <select id="elx-absorb"><option value="">none</option></select></div>
    <div><label for="elx-cluster">Cluster errors by</label>
      <select id="elx-cluster"><option value="">none</option></select></div>
    <div><label for="elx-weights">Weights</label>
      <select id="elx-weights"><option value="">none</option></select></div>
    <div><label for="elx-instrument">Instrument for the price</label>
      <select id="elx-instrument"><option value="">none (least squares)</option></select></div>
  </div>
  <p id="elx-roles-note" class="elx-muted">Fixed effects, clusters, weights and an instrument are columns of x; the pane lists them after the first check.</p>
  <button type="button" id="elx-run" class="elx-primary">Check ranges and model</button>
  <div id="elx-status" class="elx-status" role="status" aria-live="polite"></div>
  <progress id="elx-progress" class="elx-hidden" max="1" value="0" aria-label="Progress of the check"></progress>
</section>
<section id="elx-big" class="elx-hidden" aria-labelledby="elx-h-big">
  <h2 id="elx-h-big">A large range, read in blocks</h2>
  <div id="elx-big-progress" class="elx-hidden">
    <p id="elx-big-count" role="status" aria-live="polite"></p>
    <label for="elx-big-read">Rows read</label> <progress id="elx-big-read" max="1" value="0"></progress>
    <label for="elx-big-fit">Rows fitted</label> <progress id="elx-big-fit" max="1" value="0"></progress>
    <p id="elx-big-note" class="elx-muted"></p>
    <button type="button" id="elx-cancel">Cancel</button>
  </div>
  <div id="elx-big-body"></div>
  <div id="elx-big-write" class="elx-hidden">
    <h3>Put these results in the sheet as values</h3>
    <p class="elx-muted">Writes the numbers above as plain values (they do not recalculate), headed by the ranges, the options, the rows used and left out and when they were computed. Only empty cells are used; refresh the block from the list below after the data change.</p>
    <div class="elx-field">
      <label for="elx-big-target">Top left cell of the values block</label>
      <div class="elx-inline"><input id="elx-big-target" type="text" spellcheck="false" autocomplete="off" value="M2" />
      <button type="button" id="elx-big-write-btn">Write values</button></div>
    </div>
  </div>
  <div id="elx-big-msg" role="status" aria-live="polite"></div>
</section>
<section id="elx-blocks" class="elx-hidden" aria-labelledby="elx-h-blocks">
  <h2 id="elx-h-blocks">Values blocks in this workbook</h2>
  <div id="elx-blocks-body"></div>
  <div id="elx-blocks-msg" role="status" aria-live="polite"></div>
</section>
<section id="elx-verdict" class="elx-hidden" aria-labelledby="elx-h-verdict">
  <h2 id="elx-h-verdict">These options refuse the data</h2>
  <div id="elx-verdict-body"></div>
</section>
<section id="elx-check" class="elx-hidden" aria-labelledby="elx-h-check">
  <h2 id="elx-h-check">Data check</h2>
  <div id="elx-check-body"></div>
</section>
<section id="elx-choices" class="elx-hidden" aria-labelledby="elx-h-choices">
  <h2 id="elx-h-choices">Zero choices side by side</h2>
  <div id="elx-choices-body"></div>
</section>
<section id="elx-pictures" class="elx-hidden" aria-labelledby="elx-h-pictures">
  <h2 id="elx-h-pictures">Pictures</h2>
  <div id="elx-pictures-body"></div>
</section>
<section id="elx-assume" class="elx-hidden" aria-labelledby="elx-h-assume">
  <h2 id="elx-h-assume">What this form assumes</h2>
  <div id="elx-assume-body"></div>
</section>
<section id="elx-change" class="elx-hidden" aria-labelledby="elx-h-change">
  <h2 id="elx-h-change">Change over time</h2>
  <div id="elx-change-body"></div>
</section>
<section id="elx-write" aria-labelledby="elx-h-write">
  <h2 id="elx-h-write">Put the formulas in the sheet</h2>
  <p class="elx-muted" id="elx-write-what">${WRITE_BEFORE_CHECK}</p>
  <div class="elx-field">
    <label for="elx-target">Top left cell of the block</label>
    <div class="elx-inline"><input id="elx-target" type="text" spellcheck="false" autocomplete="off" value="I2" />
    <button type="button" id="elx-write-btn">Write ELX formulas</button></div>
  </div>
  <div id="elx-write-msg" role="status" aria-live="polite"></div>
</section>
<section aria-labelledby="elx-h-care">
  <h2 id="elx-h-care">Read with care</h2>
  <ul class="elx-cautions">${CAUTIONS.map((c) => `<li>${esc(c)}</li>`).join("")}</ul>
</section>`;

interface RunState {
  y: RangeSnapshot;
  x: RangeSnapshot;
  yCells: unknown[][];
  xCells: unknown[][];
  choices: Choices;
  check: CheckResult;
}

export class Pane {
  private readonly el: Record<string, HTMLElement>;
  private runId = 0;
  state: RunState | null = null;
  /** Why the last run left nothing to write (empty after a check that passed). */
  refusal = "";
  lastTimings: Timings | null = null;
  busy = false;
  /** Runs finished (for tests and the benchmark to wait on). */
  completedRuns = 0;
  completedWrites = 0;

  constructor(private readonly root: HTMLElement, private readonly host: Host) {
    root.classList.add("elx-pane");
    root.innerHTML = TEMPLATE;
    const q = (id: string) => root.querySelector(`#${id}`) as HTMLElement;
    this.el = Object.fromEntries(
      ["elx-y", "elx-x", "elx-form", "elx-estimator", "elx-zeros", "elx-se", "elx-level", "elx-absorb", "elx-cluster", "elx-weights", "elx-instrument", "elx-roles-note", "elx-run", "elx-status", "elx-progress", "elx-check", "elx-check-body", "elx-verdict", "elx-verdict-body", "elx-write-what",
        "elx-choices", "elx-choices-body", "elx-big", "elx-big-body", "elx-big-progress", "elx-big-count", "elx-big-read", "elx-big-fit", "elx-big-note", "elx-cancel", "elx-big-write", "elx-big-target", "elx-big-write-btn", "elx-big-msg", "elx-blocks", "elx-blocks-body", "elx-blocks-msg", "elx-pictures", "elx-pictures-body", "elx-assume", "elx-assume-body", "elx-change", "elx-change-body", "elx-target", "elx-write-btn", "elx-write-msg", "elx-y-sel", "elx-x-sel"]
        .map((id) => [id, q(id)]),
    );
    this.el["elx-y-sel"].addEventListener("click", () => void this.useSelection("elx-y"));
    this.el["elx-x-sel"].addEventListener("click", () => void this.useSelection("elx-x"));
    this.el["elx-run"].addEventListener("click", () => void this.run());
    this.el["elx-estimator"].addEventListener("change", () => {
      const se = this.el["elx-se"] as HTMLSelectElement;
      if (this.choices().estimator === "ppml" && ppmlSe(se.value) !== se.value) {
        se.value = ppmlSe(se.value);
        this.status(`PPML offers ${PPML_SE.join(", ")} errors; standard errors set to ${se.value}.`);
      }
    });
    this.el["elx-write-btn"].addEventListener("click", () => void this.write());
    for (const id of ["elx-y", "elx-x"]) {
      this.el[id].addEventListener("keydown", (e) => {
        if ((e as KeyboardEvent).key === "Enter") void this.run();
      });
    }
    this.el["elx-target"].addEventListener("keydown", (e) => {
      if ((e as KeyboardEvent).key === "Enter") void this.write();
    });
    this.el["elx-cancel"].addEventListener("click", () => this.cancelBig());
    this.el["elx-big-write-btn"].addEventListener("click", () => void this.writeValues());
    this.el["elx-big-target"].addEventListener("keydown", (e) => {
      if ((e as KeyboardEvent).key === "Enter") void this.writeValues();
    });
    this.renderBlocks();
  }

  private input(id: string): HTMLInputElement {
    return this.el[id] as HTMLInputElement;
  }

  /** The key columns, weight and instrument candidates of the last x read. */
  columnRoles: ColumnRoles = { keys: [], numeric: [], price: null, costs: [] };

  roleChoices(): RoleChoices {
    const v = (id: string) => (this.el[id] as HTMLSelectElement).value;
    return { absorb: v("elx-absorb"), cluster: v("elx-cluster"), weights: v("elx-weights"), instrument: this.twoStageRegistered() ? v("elx-instrument") : "" };
  }

  choices(): Choices {
    const v = (id: string) => (this.el[id] as HTMLInputElement | HTMLSelectElement).value;
    return { form: v("elx-form") as Form, estimator: v("elx-estimator") as Estimator, se: v("elx-se"), zeros: v("elx-zeros"), level: v("elx-level"), roles: roleOptions(this.roleChoices(), this.columnRoles) };
  }

  /** Whether this build of the functions fits two-stage least squares (ELX.IVCHECK is registered). */
  twoStageRegistered(): boolean {
    const e = engine();
    return !!e && typeof e.functions.IVCHECK === "function";
  }

  /** Whether this build registers a cell function (ROLLING, BREAKTEST, IVCHECK). */
  registered(id: string): boolean {
    const e = engine();
    return !!e && typeof e.functions[id] === "function";
  }

  /**
   * Windows and breaks for the checked options, when x holds a period column (time=): windows of 52
   * periods (half the periods when there are fewer than 104), moved on by a quarter of that; the
   * unit of a panel is the absorbed or clustered key. HC1 errors: in a short window one row can alone
   * determine a fixed effect, where HC3 is undefined. Breaks pool the units (no absorb=, no cluster=).
   */
  windowPlan(): { window: number; step: number; time: string; middle: number; rolling: string; breaks: string } | null {
    const s = this.state;
    if (!s || s.choices.estimator !== "ols") return null;
    const words = s.choices.roles ?? [];
    const time = words.find((w) => w.startsWith("time="))?.slice(5);
    if (!time) return null;
    const key = this.columnRoles.keys.find((k) => k.name === time);
    const periods = key?.distinct ?? 0;
    if (periods < 8 || key?.middle === undefined) return null;
    const window = periods >= 104 ? 52 : Math.max(4, Math.floor(periods / 2));
    const step = Math.max(1, Math.round(window / 4));
    const unit = words.find((w) => w.startsWith("absorb="))?.slice(7) ?? words.find((w) => w.startsWith("cluster="))?.slice(8);
    const keep = words.filter((w) => !/^(cluster|estimator|endogenous|instruments)=/.test(w) && w !== "estimator=2sls");
    const panel = unit ? [`panel=${unit}`] : [];
    const rolling = optionsText(s.choices, { se: "HC1", roles: [...keep, ...panel, `step=${step}`] });
    const breaks = optionsText(s.choices, { se: "HC1", roles: [...keep.filter((w) => !w.startsWith("absorb=")), ...panel] });
    return { window, step, time, middle: key.middle, rolling, breaks };
  }

  /**
   * The price (or first) elasticity's path over rolling windows with its band, and the break test's
   * reading, when ROLLING and BREAKTEST are registered and x holds a period column, read through the
   * typed views rollingView and breakView (never by a table's column positions).
   */
  private renderChange(eng: EngineApi): void {
    const w = this.windowPlan();
    if (!w || !this.registered("ROLLING")) return;
    const s = this.state as RunState;
    const view = eng.elasticitiesView(s.yCells, s.xCells, optionsText(s.choices), ...this.origins());
    if (!view.ok) return;
    const terms = view.value.items;
    let j = terms.findIndex((t) => !t.binary && /price/i.test(t.term));
    if (j < 0) j = terms.findIndex((t) => !t.binary);
    if (j < 0) return;
    const term = terms[j].term;
    const level = Number(s.choices.level);
    const z = normalQuantile(1 - (1 - level) / 2);
    const roll = eng.rollingView(s.yCells, s.xCells, w.window, w.rolling, ...this.origins());
    const points: PathPoint[] = [];
    let failed = 0;
    for (const win of roll.ok ? roll.value.windows : []) {
      const { from, to } = win;
      if (typeof from !== "number" || typeof to !== "number") continue;
      const b = win.estimates[j];
      const se = win.errors[j];
      if (b !== null && se !== null && Number.isFinite(b) && Number.isFinite(se)) points.push({ at: (from + to) / 2, estimate: b, lower: b - z * se, upper: b + z * se });
      else failed++;
    }
    let reading = "";
    let breakAt: number | null = null;
    if (this.registered("BREAKTEST")) {
      // the sup-F search runs over every break whatever the second argument; the middle period is
      // given because without it a time column makes the last period the second regime
      const br = eng.breakView(s.yCells, s.xCells, w.middle, w.breaks, ...this.origins());
      const sup = br.ok ? br.value.supF : null;
      if (sup) {
        breakAt = typeof sup.start === "number" ? sup.start : null;
        reading = `Break test over the pooled rows (${w.breaks}): sup-F ${pText(sup.pValue)}${breakAt !== null ? `, the most likely break from ${w.time} ${breakAt}` : ""}. A break found by searching marks where the fitted relation changed most, not why.`;
      } else reading = `The break test did not run: ${br.ok ? br.value.problem ?? "no result" : br.message}.`;
    }
    const lv = percent(level);
    const html = (points.length >= 2
      ? `<figure id="elx-rolling">${pathPlot(points, `${term} elasticity over ${w.window}-period windows`, `Middle of the window (${w.time})`, "Elasticity", breakAt)}<figcaption>Each dot is the ${esc(term)} elasticity fitted on ${w.window} consecutive periods of ${esc(w.time)} (moved on by ${w.step}); the band is the estimate ± ${esc(shortNumber(z))} standard errors (about ${esc(lv)}, HC1).${breakAt !== null ? " The dashed line is the most likely break." : ""}${failed ? ` ${failed} window${failed === 1 ? "" : "s"} could not be fitted (see ELX.ROLLING).` : ""}</figcaption></figure>`
      : `<p>No path to draw: ${roll.ok ? "fewer than two windows could be fitted" : esc(roll.message)}.</p>`) +
      (reading ? `<p id="elx-break-reading">${esc(reading)}</p>` : "") +
      `<p class="elx-muted">Windows that straddle a change mix the two regimes, so the path turns gradually; each window has fewer rows, so its band is wider. Associations, not causes: a change may come from a rival, a new range or a change in how the data were recorded.</p>`;
    this.show("elx-change", html);
  }

  /** Fills the role lists from the x columns (keeping a choice that is still there). */
  private fillRoles(roles: ColumnRoles): void {
    this.columnRoles = roles;
    const fill = (id: string, none: string, names: string[], pick = "") => {
      const sel = this.el[id] as HTMLSelectElement;
      const keep = sel.value;
      sel.innerHTML = `<option value="">${esc(none)}</option>` + names.filter(optionSafe).map((n) => `<option value="${esc(n)}">${esc(n)}</option>`).join("");
      sel.value = names.includes(keep) ? keep : pick;
    };
    const keys = roles.keys.map((k) => k.name);
    fill("elx-absorb", "none", keys);
    fill("elx-cluster", "none", keys);
    fill("elx-weights", "none", roles.numeric.filter((n) => n !== roles.price));
    // Cost-like names first; any other numeric column can be chosen by hand.
    const others = roles.numeric.filter((n) => n !== roles.price && !roles.costs.includes(n));
    fill("elx-instrument", "none (least squares)", roles.price && this.twoStageRegistered() ? [...roles.costs, ...others] : []);
    const note = this.el["elx-roles-note"];
    note.textContent = roles.keys.length
      ? `Key columns in x: ${roles.keys.map((k) => `${k.name} (${k.distinct} values)`).join(", ")}. Choose them for fixed effects or clusters.`
      : "No key column (text, or whole numbers with few values) in x: fixed effects and clusters need one.";
  }

  private status(text: string): void {
    this.el["elx-status"].textContent = text;
  }

  private show(id: string, html: string): void {
    this.el[`${id}-body`].innerHTML = html;
    this.el[id].classList.remove("elx-hidden");
  }

  async useSelection(field: "elx-y" | "elx-x"): Promise<void> {
    const r = await this.host.readSelection();
    if (!r.ok) {
      this.status(`The selection could not be used: ${r.message}.`);
      return;
    }
    this.input(field).value = r.value.requested;
    this.status(`${field === "elx-y" ? "y" : "x"} set to ${r.value.requested}.`);
  }

  /** Reads the ranges, checks them and draws everything; returns when all steps are done. */
  async run(): Promise<void> {
    // a new check stops a big read or fit still running
    this.cancelBig();
    this.el["elx-big-count"].textContent = "";
    const id = ++this.runId;
    const t0 = performance.now();
    const stale = () => id !== this.runId;
    const progress = this.el["elx-progress"] as HTMLProgressElement;
    // Progress shows only for runs longer than half a second.
    const timer = setTimeout(() => progress.classList.remove("elx-hidden"), 500);
    const step = (label: string, fraction: number) => {
      progress.value = fraction;
      this.status(label);
    };
    this.busy = true;
    this.root.setAttribute("aria-busy", "true");
    try {
      for (const s of ["elx-verdict", "elx-check", "elx-choices", "elx-pictures", "elx-assume", "elx-change"]) this.el[s].classList.add("elx-hidden");
      this.el["elx-write-msg"].textContent = "";
      // Until this run's check passes, nothing may be written for the previous ranges.
      this.state = null;
      this.refusal = "";
      this.el["elx-write-what"].textContent = WRITE_BEFORE_CHECK;
      const yText = this.input("elx-y").value.trim();
      const xText = this.input("elx-x").value.trim();
      if (!yText || !xText) {
        this.refusal = `Give ${!yText && !xText ? "the y and x ranges" : !yText ? "the y range" : "the x range"} first: type an address or select the cells and press "Use selection".`;
        this.status(this.refusal);
        return;
      }
      // Past what a formula carries: the chunked path (taskpane/chunks.ts); else one read as always.
      const [my, mx] = [await this.host.measure(yText), await this.host.measure(xText)];
      if (stale()) return;
      if (my.ok && mx.ok && needsChunks(my.value.area, mx.value.area)) {
        clearTimeout(timer);
        await this.runBig(my.value.area, mx.value.area, stale);
        return;
      }
      this.el["elx-big"].classList.add("elx-hidden");
      this.big = null;
      step("Reading the ranges…", 0.02);
      const [y, x] = [await this.host.readAddress(yText), await this.host.readAddress(xText)];
      if (stale()) return;
      if (!y.ok || !x.ok) {
        this.refusal = `${!y.ok ? `y: ${y.message}. ` : ""}${!x.ok ? `x: ${x.message}.` : ""}`.trim();
        this.status(this.refusal);
        return;
      }
      const tRead = performance.now();
      this.fillRoles(detectRoles(x.value));
      const choices = this.choices();
      step("Checking the data…", 0.05);
      const check = await checkData({ y: y.value, x: x.value, form: choices.form, estimator: choices.estimator, roles: roleColumns(this.roleChoices(), this.columnRoles) }, (f) => step("Checking the data…", 0.05 + 0.25 * f));
      const keys = keySentence(this.columnRoles);
      if (keys) check.sentences.push({ severity: "note", text: keys });
      if (stale()) return;
      this.renderCheck(check, y.value, x.value);
      const tCheck = performance.now();
      const eng = engine();
      if (!eng) {
        this.refusal = "The ELX functions are not loaded in this page, so no fit can be shown (the data check above still holds).";
        this.status(this.refusal);
        return;
      }
      if (!check.canFit) {
        this.refusal = "The ranges cannot be fitted as they are: see the data check.";
        this.status(this.refusal);
        return;
      }
      this.state = { y: y.value, x: x.value, yCells: engineValues(y.value), xCells: engineValues(x.value), choices, check };
      this.describeWrite();
      // Does the model run at all under the chosen options? If not, say so first and offer the ways out.
      const [yo, xo] = this.origins();
      const main = eng.elasticitiesView(this.state.yCells, this.state.xCells, optionsText(choices), yo, xo);
      if (!main.ok) this.renderVerdict(main.message);
      let tPictures = performance.now();
      if (main.ok) {
        step("Fitting and drawing the pictures…", 0.35);
        await yieldToPage();
        await this.renderPictures(eng, (f) => step("Fitting and drawing the pictures…", 0.35 + 0.35 * f), stale);
        if (stale()) return;
        tPictures = performance.now();
      }
      step("Comparing the zero choices…", 0.72);
      await yieldToPage();
      await this.renderChoices(eng, stale);
      if (stale()) return;
      const tChoices = performance.now();
      if (main.ok) {
        step("Running the specification tests…", 0.88);
        await yieldToPage();
        this.renderAssumptions(eng);
        step("Fitting the rolling windows…", 0.94);
        await yieldToPage();
        if (stale()) return;
        this.renderChange(eng);
      }
      const tEnd = performance.now();
      this.lastTimings = { read: tRead - t0, check: tCheck - tRead, pictures: tPictures - tCheck, choices: tChoices - tPictures, assumptions: tEnd - tChoices, total: tEnd - t0 };
      // The refusal comes first: bring it into view, its first way out under the keyboard.
      if (!main.ok) (this.el["elx-verdict-body"].querySelector("button") as HTMLElement | null)?.focus();
      const size = `${fmt(check.rows)} ${check.rows === 1 ? "row" : "rows"} × ${check.columns.length} ${check.columns.length === 1 ? "column" : "columns"}`;
      this.status(main.ok ? `Checked ${size}.` : `Checked ${size}: the chosen options do not run on these data (see below).`);
    } catch (e) {
      this.status(`Something went wrong in the pane (${e instanceof Error ? e.message : String(e)}); the workbook was not changed.`);
    } finally {
      clearTimeout(timer);
      if (id === this.runId) {
        progress.classList.add("elx-hidden");
        this.busy = false;
        this.root.setAttribute("aria-busy", "false");
        this.completedRuns++;
      }
    }
  }

  /** The last big fit (for the values block, tests and the benchmark), and its timings. */
  big: BigRun | null = null;
  lastBigTimings: { read: number; check: number; fit: number; pictures: number; total: number; blocks: number } | null = null;
  /** Why the last big run stopped ("" when it fitted). */
  bigStopped = "";
  completedRefreshes = 0;
  private cancelCurrent: (() => void) | null = null;

  /** Cancel: stops the reading and the fit; nothing is written. */
  cancelBig(): void {
    if (this.cancelCurrent) this.cancelCurrent();
  }

  /** The choices for a big fit; role columns only as chosen in their lists (a big range's x is not scanned for keys). */
  private bigChoices(): BigChoices {
    const c = this.choices();
    const r = this.roleChoices();
    const roles = [r.absorb && `absorb=${r.absorb}`, r.cluster && `cluster=${r.cluster}`, r.weights && `weights=${r.weights}`, r.instrument && `instruments=${r.instrument}`].filter((w): w is string => !!w);
    return { form: c.form, estimator: c.estimator, se: c.se, zeros: c.zeros, level: c.level, roles };
  }

  private bigProgress(read: number, fitted: number, total: number): void {
    (this.el["elx-big-read"] as HTMLProgressElement).value = total ? read / total : 0;
    (this.el["elx-big-fit"] as HTMLProgressElement).value = total ? fitted / total : 0;
    this.el["elx-big-count"].textContent = `Rows read: ${fmt(read)} of ${fmt(total)}; rows fitted: ${fmt(fitted)} of ${fmt(total)}.`;
  }

  /**
   * Reads the ranges in blocks into a big-fit session and fits them, with progress and Cancel.
   * Resolves with the run, or with the sentence saying why there is none (cancelled: Cancel).
   */
  private async fitBig(yArea: Address, xArea: Address, choose: (plan: BigPlan) => ColumnFitSpec): Promise<{ ok: true; run: BigRun; timings: { read: number; fit: number } } | { ok: false; message: string; cancelled: boolean }> {
    const t0 = performance.now();
    let cancelled = false;
    const stopped = { ok: false as const, message: "", cancelled: true };
    // Cancel works from the first moment: before the session opens it only sets the flag
    this.cancelCurrent = () => {
      cancelled = true;
    };
    this.el["elx-big-count"].textContent = "Reading the header rows…";
    this.el["elx-big-progress"].classList.remove("elx-hidden");
    (this.el["elx-cancel"] as HTMLButtonElement).disabled = false;
    const plan = await planChunks(this.host, yArea, xArea);
    if (cancelled) return stopped;
    if (!plan.ok) {
      this.cancelCurrent = null;
      return { ok: false, message: plan.message, cancelled: false };
    }
    const spec = choose(plan.value);
    const total = plan.value.rows;
    let read = 0;
    const session = await openSession(total);
    if (cancelled) {
      session.close();
      return stopped;
    }
    // an append or a fit step still waiting on a worker ends at Cancel
    let wake: () => void = () => undefined;
    const cancelSignal = new Promise<void>((resolve) => {
      wake = resolve;
    });
    this.cancelCurrent = () => {
      cancelled = true;
      session.cancel();
      wake();
    };
    this.el["elx-big-note"].textContent = session.fallbackNote
      ? session.fallbackNote
      : `${fmt(total)} rows in blocks of ${fmt(plan.value.rowsPerBlock)}; ${session.workers > 0 ? `fitted by ${session.workers} worker${session.workers === 1 ? "" : "s"} off the page` : "fitted in this page, between steps"}.`;
    this.bigProgress(0, 0, total);
    try {
      let outcome: Awaited<ReturnType<typeof readChunks>>;
      try {
        outcome = await readChunks(this.host, plan.value, (chunk) => Promise.race([session.append(chunk), cancelSignal]), {
          progress: (r) => {
            read = r;
            this.bigProgress(r, 0, total);
          },
          cancelled: () => cancelled,
        });
      } catch (e) {
        if (cancelled) return stopped;
        return { ok: false, message: `the rows could not be handed to the fit (${e instanceof Error ? e.message : String(e)}); nothing was written`, cancelled: false };
      }
      if (cancelled || (!outcome.ok && outcome.reason === "cancelled")) return { ok: false, message: "", cancelled: true };
      if (!outcome.ok) return { ok: false, message: outcome.message, cancelled: false };
      const t1 = performance.now();
      const fitted = await session.estimate(spec, (done, all) => this.bigProgress(read, Math.min(total, Math.round((done / Math.max(1, all)) * total)), total));
      if (cancelled || (!fitted.ok && fitted.cancelled)) return { ok: false, message: "", cancelled: true };
      if (!fitted.ok) return { ok: false, message: fitted.message.replace(/\.$/, ""), cancelled: false };
      this.bigProgress(total, total, total);
      const result: ColumnFitResult = fitted.value;
      const run: BigRun = {
        plan: plan.value, spec, result, tallies: outcome.tallies as ColumnTally[],
        y: formatAddress(yArea), x: formatAddress(xArea), computedAt: stamp(), workers: session.workers, fallbackNote: session.fallbackNote,
      };
      return { ok: true, run, timings: { read: t1 - t0, fit: performance.now() - t1 } };
    } finally {
      this.cancelCurrent = null;
      (this.el["elx-cancel"] as HTMLButtonElement).disabled = true;
      session.close();
    }
  }

  /** The big path of run(): checks the choices, reads, fits and shows the results. */
  private async runBig(yArea: Address, xArea: Address, stale: () => boolean): Promise<void> {
    const t0 = performance.now();
    this.big = null;
    this.bigStopped = "";
    this.el["elx-big-write"].classList.add("elx-hidden");
    this.el["elx-big-msg"].textContent = "";
    this.el["elx-big-body"].innerHTML = "";
    this.el["elx-big"].classList.remove("elx-hidden");
    const cells = rowCount(yArea) * (columnCount(yArea) + columnCount(xArea));
    const formulasNote = `${formatAddress(yArea)} and ${formatAddress(xArea)} hold ${fmt(cells)} cells, more than one formula carries (about 250,000 cells, 25,000 rows × 10 columns), so there are no formulas to write: write the results as values below.`;
    const refusal = bigRefusal(this.bigChoices(), cells);
    if (refusal) {
      this.refusal = `${refusal}.`;
      this.el["elx-big-body"].innerHTML = `<p id="elx-big-refused" class="elx-message elx-refused">${esc(refusal)}.</p>`;
      this.status("Nothing was read: the chosen options are not among those a range this large takes (see below).");
      return;
    }
    this.status(`Reading ${formatAddress(yArea)} and ${formatAddress(xArea)} in blocks…`);
    const c = this.bigChoices();
    const r = await this.fitBig(yArea, xArea, (plan) => specOf(c, plan));
    if (stale()) return;
    this.el["elx-big-progress"].classList.add("elx-hidden");
    this.refusal = formulasNote;
    if (!r.ok) {
      this.bigStopped = r.cancelled ? "cancelled" : r.message;
      const text = r.cancelled ? "Stopped (Cancel): nothing was fitted and nothing was written." : `No fit: ${r.message}.`;
      this.el["elx-big-body"].innerHTML = `<p id="elx-big-stopped" class="elx-message ${r.cancelled ? "elx-warned" : "elx-refused"}">${esc(text)}</p>`;
      this.status(text);
      return;
    }
    const t1 = performance.now();
    this.big = r.run;
    // the check first, then (after a turn for the page) the results and pictures
    this.el["elx-big-body"].innerHTML = `<h3>Data check</h3>${talliesHtml(r.run.tallies, r.run.spec.form)}<h3>Fit</h3><div id="elx-big-results"><p class="elx-muted">Drawing…</p></div>`;
    await yieldToPage();
    if (stale()) return;
    const [text, elasticities, residuals] = resultsParts(r.run);
    (this.el["elx-big-body"].querySelector("#elx-big-results") as HTMLElement).innerHTML = text;
    for (const [id, html] of [["elx-big-fig-el", elasticities], ["elx-big-fig-res", residuals]]) {
      await yieldToPage();
      if (stale()) return;
      const holder = this.el["elx-big-body"].querySelector(`#${id}`);
      if (holder) holder.innerHTML = html;
    }
    this.el["elx-big-write"].classList.remove("elx-hidden");
    this.el["elx-write-what"].textContent = formulasNote;
    const t2 = performance.now();
    this.lastBigTimings = { read: r.timings.read, check: 0, fit: r.timings.fit, pictures: t2 - t1, total: t2 - t0, blocks: Math.ceil(r.run.plan.rows / r.run.plan.rowsPerBlock) };
    this.status(`Fitted ${fmt(r.run.result.n)} of ${fmt(r.run.result.rowsRead)} rows, read in blocks of ${fmt(r.run.plan.rowsPerBlock)}.`);
  }

  /** The values blocks this pane wrote, from the document's settings. */
  valuesEntries(): ValuesEntry[] {
    const v = this.host.getSetting(REGISTRY_KEY);
    return Array.isArray(v) ? (v as ValuesEntry[]) : [];
  }

  private renderBlocks(): void {
    const list = this.valuesEntries();
    if (list.length === 0) {
      this.el["elx-blocks"].classList.add("elx-hidden");
      return;
    }
    this.el["elx-blocks-body"].innerHTML = `<ul id="elx-blocks-list">${list.map((e) => `<li data-block="${esc(e.id)}"><strong>${esc(e.area)}</strong>: ${esc(e.spec.yName)} on ${esc(e.spec.xNames.join(", "))} (${esc(specOptions(e.spec))}), y ${esc(e.y)}, x ${esc(e.x)}; computed ${esc(e.computedAt)}. <button type="button" data-refresh="${esc(e.id)}">Refresh ${esc(e.area)}</button></li>`).join("")}</ul>`;
    this.el["elx-blocks"].classList.remove("elx-hidden");
    for (const b of Array.from(this.el["elx-blocks-body"].querySelectorAll("button[data-refresh]"))) {
      b.addEventListener("click", () => void this.refreshBlock((b as HTMLElement).dataset.refresh as string));
    }
  }

  /** Writes the last big fit as a values block at the target cell (only into empty cells) and lists it. */
  async writeValues(target?: string): Promise<void> {
    const msg = this.el["elx-big-msg"];
    const show = (cls: string, html: string) => {
      msg.className = `elx-message ${cls}`;
      msg.innerHTML = html;
    };
    const run = this.big;
    try {
      if (!run) {
        show("elx-refused", "Fit a large range first (Check ranges and model); the values block holds that fit's results.");
        return;
      }
      const anchor = (target ?? this.input("elx-big-target").value).trim();
      if (target) this.input("elx-big-target").value = target;
      const block = valuesBlock(run);
      const r = await this.host.writeValues(anchor, block);
      if (!r.ok) {
        show("elx-refused", `<p id="elx-values-refusal">${esc(r.message)}</p>` + (r.suggestion ? `<button type="button" id="elx-values-there">Write at ${esc(r.suggestion)} instead</button>` : ""));
        const there = msg.querySelector("#elx-values-there");
        if (there && r.suggestion) {
          const place = r.suggestion;
          there.addEventListener("click", () => void this.writeValues(place));
        }
        return;
      }
      const entry: ValuesEntry = { id: `${Date.now().toString(36)}-${Math.floor(Math.random() * 1e6).toString(36)}`, area: r.address, y: run.y, x: run.x, spec: run.spec, computedAt: run.computedAt, written: block };
      const saved = await this.host.setSetting(REGISTRY_KEY, [...this.valuesEntries().filter((e) => e.area !== entry.area), entry]);
      this.renderBlocks();
      show("elx-done", `Values written at ${esc(r.address)}: the fit of ${esc(run.y)} on ${esc(run.x)} as it is now. They do not recalculate; refresh the block from the list of values blocks after the data change.${saved ? "" : " The workbook's settings could not be saved, so the pane will not list this block after the workbook is closed."}`);
    } finally {
      this.completedWrites++;
    }
  }

  /**
   * Reads and fits a listed block's ranges again and rewrites its cells, only after checking that
   * they still hold what the pane wrote (else nothing is written and the pane says why).
   */
  async refreshBlock(id: string): Promise<void> {
    const msg = this.el["elx-blocks-msg"];
    const show = (cls: string, html: string) => {
      msg.className = `elx-message ${cls}`;
      msg.innerHTML = html;
    };
    try {
      const entry = this.valuesEntries().find((e) => e.id === id);
      if (!entry) {
        show("elx-refused", "That values block is no longer listed.");
        return;
      }
      const [y, x, area] = [parseAddress(entry.y), parseAddress(entry.x), parseAddress(entry.area)];
      if (!y.ok || !x.ok || !area.ok) {
        show("elx-refused", `The block's addresses (${esc(entry.area)}) cannot be read; write a new block.`);
        return;
      }
      // before reading anything: is the block still the pane's?
      const own = await this.host.stillOwn(area.value, entry.written);
      if (own) {
        show("elx-refused", `<p id="elx-refresh-refusal">${esc(own)}</p>`);
        return;
      }
      const [my, mx] = [await this.host.measure(entry.y), await this.host.measure(entry.x)];
      if (!my.ok || !mx.ok) {
        show("elx-refused", `Nothing was written: ${esc(!my.ok ? my.message : (mx as { message: string }).message)}.`);
        return;
      }
      // the block's own ranges as they were given (a grown sheet is not taken in silently)
      const yArea = intersectTo(y.value, my.value.area);
      const xArea = intersectTo(x.value, mx.value.area);
      this.el["elx-big"].classList.remove("elx-hidden");
      show("elx-muted", `Refreshing ${esc(entry.area)}: reading ${esc(entry.y)} and ${esc(entry.x)} again…`);
      const r = await this.fitBig(yArea, xArea, (plan) => ({ ...entry.spec, yName: plan.yName, xNames: plan.xNames, firstRow: plan.firstRow }));
      this.el["elx-big-progress"].classList.add("elx-hidden");
      if (!r.ok) {
        show(r.cancelled ? "elx-warned" : "elx-refused", r.cancelled ? `Stopped (Cancel): ${esc(entry.area)} was not changed.` : `Nothing was written: ${esc(r.message)}.`);
        return;
      }
      const next = valuesBlock(r.run);
      const w = await this.host.rewriteOwn(area.value, entry.written, next);
      if (!w.ok) {
        show("elx-refused", `<p id="elx-refresh-refusal">${esc(w.message)}</p>`);
        return;
      }
      const updated: ValuesEntry = { ...entry, spec: r.run.spec, computedAt: r.run.computedAt, written: next };
      await this.host.setSetting(REGISTRY_KEY, this.valuesEntries().map((e) => (e.id === id ? updated : e)));
      this.renderBlocks();
      // rows added below the block's ranges are not taken in silently: say how many there are
      const below = my.value.used.bottom > yArea.bottom ? await countFilled(this.host, { ...yArea, top: yArea.bottom + 1, bottom: my.value.used.bottom }) : null;
      const grown = below && below.ok && below.value.rows > 0
        ? ` <span id="elx-refresh-below">${esc(fmt(below.value.rows))} ${below.value.rows === 1 ? "row" : "rows"} below ${esc(formatAddress(yArea))} ${below.value.rows === 1 ? "holds" : "hold"} a value in y's column (down to row ${esc(fmt(below.value.last))}) and ${below.value.rows === 1 ? "was" : "were"} not read: the refresh reads the block's own ranges. To take ${below.value.rows === 1 ? "it" : "them"} in, give y and x ranges that reach row ${esc(fmt(below.value.last))}, check them and write a new block.</span>`
        : "";
      show(grown ? "elx-warned" : "elx-done", `Refreshed ${esc(entry.area)}: ${esc(fmt(r.run.result.n))} rows used, computed ${esc(r.run.computedAt)}.${grown}`);
    } finally {
      this.completedRefreshes++;
    }
  }

  private invocation(): unknown {
    const s = this.state as RunState;
    return { parameterAddresses: [s.y.address, s.x.address] };
  }

  /** Where the ranges start (1-based), as the cells' parameter addresses give it: the same cache key. */
  private origins(): [Origin, Origin] {
    const s = this.state as RunState;
    return [{ row: s.y.area.top, column: s.y.area.left }, { row: s.x.area.top, column: s.x.area.left }];
  }

  private callFor(eng: EngineApi, id: string, options: string, extra: unknown[] = []): Outcome<unknown> {
    const s = this.state as RunState;
    return eng.call(id, s.yCells, s.xCells, ...extra, options, this.invocation());
  }

  private renderCheck(c: CheckResult, y: RangeSnapshot, x: RangeSnapshot): void {
    const head = `<p class="elx-muted">y ${esc(y.address)}, x ${esc(x.address)}${y.clipped || x.clipped ? " (cut to the sheet's used cells)" : ""}: ${fmt(c.rows)} data rows, ${fmt(c.usable)} usable.</p>`;
    const rows = c.columns.map((col) => `<tr><th scope="row">${esc(col.name)}${col.role === "y" ? " (y)" : ""}</th><td>${fmt(col.values)}</td><td>${fmt(col.blank + col.text + col.errors)}</td><td>${fmt(col.zeros)}</td><td>${fmt(col.negatives)}</td><td>${col.role === "key" ? "key / role" : col.binary ? "binary" : col.logged ? "log" : "levels"}</td></tr>`).join("");
    const tableHtml = c.columns.length === 0 ? "" : `<div class="elx-table-wrap"><table id="elx-check-table" class="elx-compact"><caption>Per column, over the data rows</caption><thead><tr><th scope="col">Column</th><th scope="col">Values</th><th scope="col">Blank, text or error</th><th scope="col">Zeros</th><th scope="col">Below zero</th><th scope="col">Taken as</th></tr></thead><tbody>${rows}</tbody></table></div>`;
    const label = { problem: "Problem:", warning: "Warning:", note: "Note:" };
    const sentences = `<ul class="elx-sentences" id="elx-sentences">${c.sentences.map((s) => `<li class="elx-${s.severity}"><span class="elx-tag">${label[s.severity]}</span>${esc(s.text)}</li>`).join("")}</ul>`;
    this.show("elx-check", (c.columns.length ? head : "") + tableHtml + sentences);
  }

  private async renderPictures(eng: EngineApi, progress: (f: number) => void, stale: () => boolean): Promise<void> {
    const s = this.state as RunState;
    const c = s.choices;
    const xSide = c.form === "log-log" || c.form === "level-log" ? "log" : "level";
    const [yo, xo] = this.origins();
    const parts: string[] = [];
    // Residuals against fitted values, y in levels and y in logs, same x side and zero policy (OLS).
    const figs: string[] = [];
    const variants: [string, string][] = [[`level-${xSide}`, "y in levels"], [`log-${xSide}`, "y in logs"]];
    for (let v = 0; v < variants.length; v++) {
      const [form, label] = variants[v];
      const opts = optionsText(c, { form: form as Form, estimator: "ols" });
      const view = eng.fitView(s.yCells, s.xCells, opts, yo, xo);
      if (!view.ok) {
        figs.push(`<figure><figcaption><strong>${esc(label)}:</strong> no fit (${esc(view.message)}).</figcaption></figure>`);
      } else {
        const yl = form.startsWith("log") ? `log ${view.value.yName}` : view.value.yName;
        const bp = this.callFor(eng, "HETEROTEST", opts, ["bp"]);
        const p = bp.ok ? (table2d(bp.value)?.[0]?.[0] as number) : null;
        const plot = residualPlot({ fitted: view.value.fitted, residuals: view.value.residuals, title: `Residuals against fitted values, ${label}`, xLabel: `Fitted ${yl}`, yLabel: "Residual" });
        const thinned = plot.drawn < view.value.n ? ` ${fmt(plot.drawn)} of ${fmt(view.value.n)} points drawn.` : "";
        figs.push(`<figure data-form="${esc(form)}">${plot.svg}<figcaption><strong>${esc(label)}</strong> (${esc(form)}, ${fmt(view.value.n)} rows): Breusch–Pagan ${bp.ok ? pText(p) : `not available (${esc(bp.message)})`}.${thinned}</figcaption></figure>`);
      }
      progress((v + 1) / 4);
      await yieldToPage();
      if (stale()) return;
    }
    parts.push(`<h3>Residuals: levels against logs</h3><p class="elx-muted">A fan (spread growing with the fitted value) or a curve is what the log is meant to remove; a small Breusch–Pagan p says the spread is not constant.</p><div class="elx-pair">${figs.join("")}</div>`);
    // Normal quantile plot of the chosen form's residuals (the log-y least-squares fit when PPML is chosen).
    const qForm = c.estimator === "ppml" ? `log-${xSide}` : c.form;
    const qOpts = optionsText(c, { form: qForm as Form, estimator: "ols" });
    const qView = eng.fitView(s.yCells, s.xCells, qOpts, yo, xo);
    if (qView.ok) {
      const jb = this.callFor(eng, "NORMALTEST", qOpts);
      const p = jb.ok ? (table2d(jb.value)?.[0]?.[0] as number) : null;
      const plot = quantilePlot(qView.value.residuals, `Normal quantile plot of the residuals, ${qForm}`);
      parts.push(`<h3>Are the residuals normal?</h3><figure id="elx-qq">${plot.svg}<figcaption>Residuals of the ${esc(qForm)} fit against a normal curve's quantiles: Jarque–Bera ${jb.ok ? pText(p) : `not available (${esc(jb.message)})`}. Normality matters for the normal-theory factor and small samples, not for robust intervals in large ones.</figcaption></figure>`);
    } else {
      parts.push(`<h3>Are the residuals normal?</h3><p>No quantile plot: the ${esc(qForm)} fit did not run (${esc(qView.message)}).</p>`);
    }
    progress(3 / 4);
    await yieldToPage();
    if (stale()) return;
    // Elasticities with their intervals, for the chosen options (PPML included), read as numbers from the engine.
    const el = eng.elasticitiesView(s.yCells, s.xCells, optionsText(c), yo, xo);
    if (el.ok) {
      const v = el.value;
      const lv = percent(v.level);
      const rows: IntervalRow[] = v.items.filter((r) => !r.binary && [r.estimate, r.lower, r.upper].every(Number.isFinite)).map((r) => ({ term: r.term, estimate: r.estimate, lower: r.lower, upper: r.upper }));
      const binaries = v.items.filter((r) => r.binary).map((r) => r.term);
      const txt = v.items.filter((r) => !r.binary).map((r) => `<tr><th scope="row">${esc(r.term)}</th><td>${esc(cellText(r.estimate))}</td><td>${esc(cellText(r.lower))}</td><td>${esc(cellText(r.upper))}</td></tr>`).join("");
      parts.push(`<h3>Elasticities (${esc(v.estimator === "ppml" ? "PPML" : c.form)}; errors: ${esc(v.seLabel)})</h3>` +
        (rows.length ? `<figure id="elx-elasticities">${intervalPlot(rows, "Elasticities with their intervals", lv)}<figcaption>Dots are elasticities, bars their ${esc(lv)} intervals; the black line is zero.</figcaption></figure>` : "") +
        `<div class="elx-table-wrap"><table><caption>The same numbers${binaries.length ? `; ${esc(binaries.join(", "))}: binary, see ELX.EFFECTS` : ""}</caption><thead><tr><th scope="col">Term</th><th scope="col">Elasticity</th><th scope="col">Low (${esc(lv)})</th><th scope="col">High (${esc(lv)})</th></tr></thead><tbody>${txt}</tbody></table></div>`);
    } else {
      parts.push(`<h3>Elasticities</h3><p>${c.estimator === "ppml" ? "PPML did not run for these ranges" : "No elasticities for these options"}: ${esc(el.message)}.</p>`);
    }
    progress(1);
    this.show("elx-pictures", parts.join(""));
  }

  private async renderChoices(eng: EngineApi, stale: () => boolean): Promise<void> {
    const s = this.state as RunState;
    const c = s.choices;
    if (s.check.lostToLog === 0) {
      this.show("elx-choices", `<p>No row is lost to a log here, so the zero choices give the same fit${c.form === "level-level" ? " (nothing is logged in levels – levels)" : ""}.</p>`);
      return;
    }
    const [yo, xo] = this.origins();
    const choices: { key: string; label: string; options: string }[] = [
      { key: "drop", label: "leave out", options: optionsText(c, { zeros: "drop", estimator: "ols" }) },
      { key: "shift", label: "log(v + 1)", options: optionsText(c, { zeros: "shift", estimator: "ols" }) },
      { key: "ihs", label: "asinh", options: optionsText(c, { zeros: "ihs", estimator: "ols" }) },
      { key: "ppml", label: ppmlSe(c.se) === c.se ? "PPML" : `PPML (${ppmlSe(c.se)})`, options: optionsText(c, { zeros: "drop", estimator: "ppml", se: ppmlSe(c.se) }) },
    ];
    const results: { key: string; label: string; view: ElasticitiesView | null; message: string; n: number | null }[] = [];
    for (const ch of choices) {
      const r = eng.elasticitiesView(s.yCells, s.xCells, ch.options, yo, xo);
      const view = r.ok ? eng.fitView(s.yCells, s.xCells, ch.options, yo, xo) : null;
      results.push({ key: ch.key, label: ch.label, view: r.ok ? r.value : null, message: r.ok ? "" : r.message, n: view && view.ok ? view.value.n : null });
      await yieldToPage();
      if (stale()) return;
    }
    const ok = results.filter((r) => r.view);
    const failed = results.filter((r) => !r.view);
    const items = ok[0]?.view?.items ?? [];
    const terms = items.filter((r) => !r.binary).map((r) => r.term);
    const binaries = items.filter((r) => r.binary).map((r) => r.term);
    const lv = percent(Number(c.level));
    // One group of rows per term, one row per choice: every number in its own column, nothing wraps.
    const body = terms.map((term) => `<tr class="elx-group"><th scope="colgroup" colspan="5">${esc(term)}</th></tr>` + ok.map((r) => {
      const row = r.view?.items.find((i) => i.term === term);
      const nums = row ? [row.estimate, row.lower, row.upper].map((v) => `<td>${esc(cellText(v))}</td>`).join("") : "<td>–</td><td>–</td><td>–</td>";
      return `<tr data-choice="${esc(r.key)}" data-term="${esc(term)}"><th scope="row">${esc(r.label)}</th>${nums}<td>${r.n === null ? "–" : esc(fmt(r.n))}</td></tr>`;
    }).join("")).join("");
    const html = (ok.length ? `<p>${esc(fmt(s.check.lostToLog))} ${s.check.lostToLog === 1 ? "row holds" : "rows hold"} a zero or negative in a logged column. The elasticity under each way of handling them, with its ${esc(lv)} interval:</p><div class="elx-table-wrap"><table id="elx-choices-table" class="elx-compact"><caption>Elasticity by zero choice${binaries.length ? `; ${esc(binaries.join(", "))}: binary, see ELX.EFFECTS` : ""}</caption><thead><tr><th scope="col">Choice</th><th scope="col">Elasticity</th><th scope="col">Low (${esc(lv)})</th><th scope="col">High (${esc(lv)})</th><th scope="col">Rows used</th></tr></thead><tbody>${body}</tbody></table></div>` : "") +
      failed.map((r) => `<p data-choice-error="${esc(r.key)}">${r.key === "ppml" ? "PPML" : esc(r.label)}: not available for these ranges (${esc(r.message)}).</p>`).join("") +
      `<p class="elx-muted">log(v + 1) and asinh results depend on the units of the shifted column; PPML keeps zero y and leaves out only rows with a zero in a logged x. Whichever you choose, say so where the number is used.</p>`;
    this.show("elx-choices", html);
  }

  private renderAssumptions(eng: EngineApi): void {
    const s = this.state as RunState;
    const c = s.choices;
    // the errors in force: a cluster= choice writes se=cluster, 2SLS turns HC2/HC3 into HC1
    const se = /(?:^|; )se=([^;]+)/.exec(optionsText(c))?.[1] ?? c.se;
    const paras = formAssumptions(c.form, c.estimator, se);
    let tests = "";
    if (c.estimator === "ols") {
      const r = eng.testsView(s.yCells, s.xCells, optionsText(c), ...this.origins());
      const readings = testReadings(r.ok ? r.value : null, r.ok ? null : r.message);
      tests = `<h3>What the tests say for these data now</h3><ul class="elx-cautions" id="elx-tests">${readings.map((t) => `<li>${esc(t)}</li>`).join("")}</ul>`;
      const sm = c.form.startsWith("log") ? this.callFor(eng, "SMEARING", optionsText(c)) : null;
      if (sm && sm.ok) {
        const f = table2d(sm.value)?.[0]?.[0];
        if (typeof f === "number") tests += `<p>${esc(smearingNote(f))}</p>`;
      }
    } else {
      tests = "<p>The specification tests (ELX.TESTS) are for the least-squares forms; the pictures above show the least-squares residuals for comparison.</p>";
    }
    const roles = this.roleChoices();
    paras.push(...roleAssumptions(roles, this.columnRoles));
    const iv = this.instrumentHtml(eng);
    this.show("elx-assume", paras.map((p) => `<h3>${esc(p.heading)}</h3><p>${esc(p.text)}</p>`).join("") + iv + tests);
  }

  /**
   * When x holds a price column and a plausible cost column (or one chosen by hand): what an
   * instrument must satisfy, and, when two-stage least squares is in this build, the price
   * elasticity by least squares (x without the instrument column) and by 2SLS side by side.
   */
  private instrumentHtml(eng: EngineApi): string {
    const s = this.state as RunState;
    const r = this.columnRoles;
    const chosen = this.roleChoices().instrument;
    const cost = chosen || r.costs[0];
    if (!r.price || !cost) return "";
    const registered = this.twoStageRegistered();
    const para = instrumentParagraph(r.price, cost, registered);
    let html = `<section id="elx-instrument-section"><h3>${esc(para.heading)}</h3><p>${esc(para.text)}</p>`;
    if (registered && chosen) {
      const c = s.choices;
      const ivOpts = optionsText(c, { estimator: "ols" });
      const olsOpts = optionsText(c, { estimator: "ols", roles: (c.roles ?? []).filter((w) => !/^(estimator|endogenous|instruments)=/.test(w)) });
      // least squares on x without the instrument column (it is not a regressor)
      const header = s.xCells[0] ?? [];
      const j = header.findIndex((h) => typeof h === "string" && h.trim() === chosen);
      const xOls = j < 0 ? s.xCells : s.xCells.map((row) => row.filter((_, k) => k !== j));
      const a = eng.elasticitiesView(s.yCells, xOls, olsOpts, null, null);
      const b = eng.elasticitiesView(s.yCells, s.xCells, ivOpts, null, null);
      const row = (label: string, v: Outcome<ElasticitiesView>) => {
        const it = v.ok ? v.value.items.find((i) => i.term === r.price) : undefined;
        return `<tr data-estimator="${esc(label)}"><th scope="row">${esc(label)}</th>${it ? [it.estimate, it.lower, it.upper].map((n) => `<td>${esc(cellText(n))}</td>`).join("") : `<td colspan="3">${esc(v.ok ? "no price term" : v.message)}</td>`}</tr>`;
      };
      const lv = percent(Number(c.level));
      html += `<div class="elx-table-wrap"><table id="elx-iv-table" class="elx-compact"><caption>${esc(r.price)} elasticity, least squares against 2SLS with ${esc(cost)}</caption><thead><tr><th scope="col">Estimator</th><th scope="col">Elasticity</th><th scope="col">Low (${esc(lv)})</th><th scope="col">High (${esc(lv)})</th></tr></thead><tbody>${row("least squares", a)}${row("2SLS", b)}</tbody></table></div>`;
      html += `<p class="elx-muted">2SLS intervals are wider: that is the price of removing the bias, not a worse fit. ELX.IVCHECK in the written block gives the first-stage F and the Wu–Hausman test.</p>`;
    }
    return html + "</section>";
  }

  /**
   * The chosen options do not run on these data: say so before anything else and, when a log meets
   * zeros, offer each way of handling them as one button that sets the options and checks again.
   */
  private renderVerdict(message: string): void {
    const s = this.state as RunState;
    const c = s.choices;
    const what = c.estimator === "ppml" ? "PPML did not run for these ranges" : `With ${c.zeros === "stop" ? "zeros=stop (stop and tell me)" : `zeros=${c.zeros}`} the model does not run on these ranges`;
    let html = `<p id="elx-elasticity-error" class="elx-message elx-refused">${esc(what)}: ${esc(message)}.</p>`;
    const offers = s.check.lostToLog > 0 ? ZERO_OFFERS.filter((o) => !(o.zeros === c.zeros && o.estimator === c.estimator)) : [];
    if (offers.length) {
      html += `<p>Choose how to handle the ${esc(fmt(s.check.lostToLog))} rows with a zero or negative under a log, and the pane checks again (the table below compares the choices):</p><div class="elx-offers">` +
        offers.map((o) => `<button type="button" data-zeros="${esc(o.zeros)}" data-estimator="${esc(o.estimator)}">${esc(o.label)}</button>`).join("") + "</div>";
    } else {
      html += "<p>See the data check below for what to change, then check again.</p>";
    }
    this.show("elx-verdict", html);
    for (const btn of Array.from(this.el["elx-verdict-body"].querySelectorAll("button[data-zeros]"))) {
      btn.addEventListener("click", () => void this.useZeroChoice((btn as HTMLElement).dataset.zeros as string, (btn as HTMLElement).dataset.estimator as Estimator));
    }
  }

  /** Sets the zero policy (and estimator) and checks again. */
  async useZeroChoice(zeros: string, estimator: Estimator): Promise<void> {
    (this.el["elx-zeros"] as HTMLSelectElement).value = zeros;
    const est = this.el["elx-estimator"] as HTMLSelectElement;
    if (est.value !== estimator) {
      est.value = estimator;
      est.dispatchEvent(new Event("change"));
    }
    await this.run();
    (this.el["elx-run"] as HTMLElement).focus();
  }

  /** The functions the writer will put in the sheet for the checked ranges and options. */
  private plannedItems(): PlannedItem[] {
    const s = this.state as RunState;
    const out: PlannedItem[] = [
      { id: "FIT", label: "Coefficients (ELX.FIT)" },
      { id: "ELASTICITIES", label: "Elasticities (ELX.ELASTICITIES)" },
    ];
    if (s.choices.estimator === "ols" && s.check.columns.some((col) => col.role === "x" && col.binary) && s.choices.form.startsWith("log")) out.push({ id: "EFFECTS", label: "Percent effects of binary columns (ELX.EFFECTS)" });
    if (s.choices.estimator === "ols") out.push({ id: "TESTS", label: "Specification tests (ELX.TESTS)" });
    out.push({ id: "SUMMARY", label: "Fit summary (ELX.SUMMARY)" });
    if ((s.choices.roles ?? []).includes("estimator=2sls") && s.choices.estimator === "ols" && this.twoStageRegistered()) out.push({ id: "IVCHECK", label: "Instrument check (ELX.IVCHECK)" });
    const w = this.windowPlan();
    if (w && this.registered("ROLLING")) out.push({ id: "ROLLING", label: `Elasticities over ${w.window}-period windows (ELX.ROLLING)`, extra: [String(w.window)], values: [w.window], options: w.rolling });
    if (w && this.registered("BREAKTEST")) out.push({ id: "BREAKTEST", label: `Did the model change? Chow and Wald at ${w.time} ${w.middle}, the middle period (put the period of a known change in the third argument); sup-F searches every break (ELX.BREAKTEST)`, extra: [String(w.middle)], values: [w.middle], options: w.breaks });
    return out;
  }

  /** Says exactly which functions the writer will put in the sheet, for which ranges. */
  private describeWrite(): void {
    const s = this.state as RunState;
    const names = this.plannedItems().map((i) => `ELX.${i.id}`);
    const list = names.length > 1 ? `${names.slice(0, -1).join(", ")} and ${names[names.length - 1]}` : names[0];
    this.el["elx-write-what"].textContent = `Writes ${list} for y ${s.y.address} and x ${s.x.address} with "${optionsText(s.choices)}", so the results live in the workbook and recalculate with the data. Only empty cells are used.`;
  }

  /**
   * The room a function's result needs for these ranges and options: the largest of its shape on the
   * data now, on the same data with the zero rows left out, and on a stand-in of the same columns (so
   * that a formula that fails today still gets the room of the result it gives once the data are fixed).
   */
  private room(eng: EngineApi, id: string, opts: string, standIn: { y: unknown[][]; x: unknown[][] }, extra: unknown[] = []): { height: number; width: number; now: Outcome<unknown> } {
    const shape = (r: Outcome<unknown>) => {
      const t = r.ok ? table2d(r.value) : null;
      if (!t) return null;
      let width = 0; // a loop: spreading a long table's rows into Math.max's arguments overflows the stack
      for (const row of t) if (row.length > width) width = row.length;
      return { height: t.length, width };
    };
    const now = this.callFor(eng, id, opts, extra);
    const shapes = [shape(now), shape(this.callFor(eng, id, opts.replace(/zeros=\w+/, "zeros=drop"), extra)), shape(eng.call(id, standIn.y, standIn.x, ...extra, opts, null))].filter((v): v is { height: number; width: number } => v !== null);
    return { height: Math.max(1, ...shapes.map((v) => v.height)), width: Math.max(1, ...shapes.map((v) => v.width)), now };
  }

  /** Writes the formula block at the target cell (after the whole block is checked to be empty). */
  async write(target?: string): Promise<void> {
    const msg = this.el["elx-write-msg"];
    const show = (cls: string, html: string) => {
      msg.className = `elx-message ${cls}`;
      msg.innerHTML = html;
    };
    const s = this.state;
    const eng = engine();
    if (!s && this.big) {
      this.completedWrites++;
      show("elx-refused", `${esc(this.refusal)}`);
      return;
    }
    if (!s || !eng) {
      this.completedWrites++;
      show("elx-refused", this.refusal
        ? `Nothing was written: the last check did not pass (${esc(this.refusal.replace(/\.$/, ""))}). Fix the ranges and check again; the block is written for the ranges and options of a check that passed.`
        : "Check the ranges first (the button above); the block is written for the ranges and options checked.");
      return;
    }
    const anchor = (target ?? this.input("elx-target").value).trim();
    if (target) this.input("elx-target").value = target;
    const opts = optionsText(s.choices);
    const standIn = standInData(s.check);
    const items: BlockItem[] = [];
    const failing: { id: string; message: string }[] = [];
    for (const p of this.plannedItems()) {
      const r = this.room(eng, p.id, p.options ?? opts, standIn, p.values ?? []);
      if (!r.now.ok) failing.push({ id: p.id, message: r.now.message });
      items.push({ id: p.id, label: p.label, height: r.height, width: r.width, extra: p.extra, options: p.options });
    }
    const yName = s.check.columns[0]?.name ?? "y";
    const xNames = s.check.columns.slice(1).map((col) => col.name).join(", ");
    const block = buildBlock({
      y: formatAddress(s.y.area, { absolute: true }),
      x: formatAddress(s.x.area, { absolute: true }),
      options: opts,
      title: `Elasticell: ${yName} on ${xNames} (${opts})`,
      items,
    });
    const r = await this.host.writeBlock(anchor, block);
    this.completedWrites++;
    if (r.ok) {
      const names = items.map((i) => `ELX.${i.id}`).join(", ");
      if (failing.length === 0) {
        show("elx-done", `Written at ${esc(r.address)}: ${items.length} formulas (${esc(names)}) with room for their results. They recalculate when the data change.`);
      } else {
        const which = failing.map((f) => `ELX.${f.id}`).join(", ");
        show("elx-warned", `<p id="elx-write-errors">Written at ${esc(r.address)}: ${items.length} formulas (${esc(names)}), but ${failing.length === items.length ? "all of them" : `${failing.length} of them (${esc(which)})`} return an error for these ranges and options now: ${esc(failing[0].message)}.</p>` +
          `<p>Room is kept for the results they give once the data or the options are fixed; change the options in the formulas, or check again with other choices and write a new block.</p>`);
      }
      return;
    }
    show("elx-refused", `<p id="elx-refusal">${esc(r.message)}</p>` + (r.suggestion ? `<button type="button" id="elx-write-there">Write at ${esc(r.suggestion)} instead</button>` : ""));
    const there = msg.querySelector("#elx-write-there");
    if (there && r.suggestion) {
      const place = r.suggestion;
      there.addEventListener("click", () => void this.write(place));
      (there as HTMLElement).focus();
    }
  }
}

/** The given area cut to the used one (kept on the given area's sheet). */
function intersectTo(given: Address, used: Address): Address {
  return { sheet: used.sheet, top: Math.max(given.top, used.top), left: Math.max(given.left, used.left), bottom: Math.min(given.bottom, used.bottom), right: Math.min(given.right, used.right) };
}

/** A formula the writer plans: its id, label, extra arguments (as formula text and as values) and own options. */
interface PlannedItem {
  id: string;
  label: string;
  extra?: string[];
  values?: unknown[];
  options?: string;
}

/** The ways out offered when a log meets zeros under the chosen options. */
const ZERO_OFFERS: { zeros: string; estimator: Estimator; label: string }[] = [
  { zeros: "drop", estimator: "ols", label: "Leave those rows out (zeros=drop)" },
  { zeros: "shift", estimator: "ols", label: "log(v + 1) (zeros=shift)" },
  { zeros: "ihs", estimator: "ols", label: "asinh (zeros=ihs)" },
  { zeros: "drop", estimator: "ppml", label: "PPML, zero y kept (estimator=ppml)" },
];

/**
 * Well-behaved data with the checked ranges' header and columns (binary columns stay 0/1, the rest
 * positive, seeded): the functions' result shapes for these columns and options, whatever the data now.
 */
export function standInData(check: CheckResult): { y: unknown[][]; x: unknown[][] } {
  const xs = check.columns.filter((c) => c.role === "x");
  const yName = check.columns.find((c) => c.role === "y")?.name ?? "y";
  const rows = Math.max(40, 4 * (xs.length + 2));
  let seed = 12345;
  const u = () => {
    seed = (Math.imul(seed, 1103515245) + 12345) >>> 0;
    return (seed >>> 8) / 16777216;
  };
  const y: unknown[][] = [[yName]];
  const x: unknown[][] = [xs.map((c) => c.name)];
  for (let i = 0; i < rows; i++) {
    const line = xs.map((c, j) => (c.binary ? (i + j) % 3 === 0 ? 1 : 0 : 1 + 9 * u()));
    let eta = 1;
    for (const v of line) eta += 0.1 * Math.log(Number(v) + 1);
    x.push(line);
    y.push([Math.exp(eta + 0.3 * (u() - 0.5))]);
  }
  return { y, x };
}

function injectStyle(): void {
  if (document.getElementById("elx-pane-style")) return;
  const style = document.createElement("style");
  style.id = "elx-pane-style";
  style.textContent = css;
  document.head.appendChild(style);
}

/** Mounts the pane into #elx-pane (or the given element) over the host's runner. */
export function mountPane(root: HTMLElement | null = document.getElementById("elx-pane")): Pane | null {
  if (!root) return null;
  const runner = hostRunner();
  injectStyle();
  if (!runner) {
    root.textContent = "Elasticell's pane needs the spreadsheet host (or the preview page): the workbook API is not available here.";
    return null;
  }
  const pane = new Pane(root, new Host(runner));
  (globalThis as unknown as { ElxPane: Pane }).ElxPane = pane;
  return pane;
}

/** How long the pane waits for the host before it says that the host has not answered. */
export const HOST_WAIT_MS = 5000;

/** Replaces the "Loading…" text with a sentence saying what is wrong and what to do. */
function loadingProblem(text: string): void {
  const root = document.getElementById("elx-pane");
  if (!root || root.classList.contains("elx-pane")) return;
  injectStyle();
  root.innerHTML = `<div class="elx-pane"><h1>Elasticell</h1><p class="elx-message elx-refused" id="elx-load-problem" role="alert">${esc(text)}</p></div>`;
}

export const OFFICE_MISSING =
  "The spreadsheet host's script (office.js, loaded from appsforoffice.microsoft.com) could not load, so the pane cannot reach the workbook. This machine may be offline, or a proxy or firewall may block that address. Connect, then close and reopen the pane. Without the host, the preview page (npm start) shows the pane and the ELX functions on this machine alone.";
export const HOST_SILENT =
  "The spreadsheet host has not answered after several seconds, so the pane cannot reach the workbook yet. If this page was opened in a plain browser, open it from the host instead (the Elasticell tab › Elasticity check); in the host, close and reopen the pane, or reload the add-in.";

// Inert outside the host: real office.js outside a host resolves onReady with host null.
if (typeof document !== "undefined") {
  if (typeof Office === "undefined") {
    // taskpane.js runs after office.js's script tag: when Office is missing here, that script failed to load.
    loadingProblem(OFFICE_MISSING);
  } else {
    const silent = setTimeout(() => loadingProblem(HOST_SILENT), HOST_WAIT_MS);
    Office.onReady((info) => {
      clearTimeout(silent);
      if (info && info.host) mountPane();
      else {
        loadingProblem("Open this pane from the spreadsheet host (the Elasticell tab › Elasticity check), or use the preview page (npm start) to try it on this machine.");
      }
    });
  }
}
