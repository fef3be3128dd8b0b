/**
 * Options text: "key=value; key=value", keys and values case-insensitive, spaces ignored (except
 * inside the column names of levels=, which are matched as headers are: see resolveColumn).
 *
 * One parser for every function, so a formula can change from ELX.FIT to ELX.SUMMARY by its name
 * alone. Unknown keys and values are a #VALUE! problem naming the nearest valid one. Options that a
 * function does not use are accepted and ignored (they matter to its neighbours).
 */
import { cut, fail, nearest, quote } from "./problems";

export type Form = "log-log" | "log-level" | "level-log" | "level-level";
export type Estimator = "ols" | "ppml" | "2sls";
export type SeType = "classical" | "HC0" | "HC1" | "HC2" | "HC3" | "HAC" | "cluster" | "DK";
export type ZeroPolicy = "stop" | "drop" | "shift" | "ihs";
export type AtPoint = "mean" | "median";
export type Retransform = "duan" | "normal" | "none";
export type IntervalKind = "none" | "mean" | "individual";

export interface Options {
  form: Form;
  /** Column names or 1-based numbers, as typed, to keep in levels under a log x side. */
  levels: string[];
  estimator: Estimator;
  /** null: the estimator's default (HC3 for OLS, HC1 for PPML). */
  se: SeType | null;
  /** null: the default lag length floor(4 (n/100)^(2/9)). */
  lags: number | null;
  level: number;
  zeros: ZeroPolicy;
  shift: number;
  at: AtPoint;
  retransform: Retransform;
  interval: IntervalKind;
  intercept: boolean;
  headers: boolean;
  /**
   * Role columns of x, each named by header or 1-based number as typed (see RoleName): fixed-effect
   * keys (at most two), factor columns, cluster keys (at most two), the panel unit, the period, the
   * weights, excluded instruments, and the regressors named endogenous.
   */
  absorb: string[];
  factors: string[];
  cluster: string[];
  panel: string | null;
  time: string | null;
  weights: string | null;
  instruments: string[];
  endogenous: string[];
  /** Windows of ELX.ROLLING: length (rows, or periods with time=), step, expanding start. */
  window: number | null;
  step: number;
  expanding: boolean;
  /** Share of rows at each end where ELX.BREAKTEST places no break. */
  trim: number;
}

/** The options that name columns of x in a role (not regressors, except factors' indicators). */
export const ROLE_KEYS = ["absorb", "factors", "cluster", "panel", "time", "weights", "instruments"] as const;
export type RoleKey = (typeof ROLE_KEYS)[number];

/** Default confidence level of intervals (common practice). */
export const DEFAULT_LEVEL = 0.95;

export const DEFAULTS: Readonly<Options> = Object.freeze({
  form: "log-log",
  levels: [],
  estimator: "ols",
  se: null,
  lags: null,
  level: DEFAULT_LEVEL,
  zeros: "stop",
  shift: 1,
  at: "mean",
  retransform: "duan",
  interval: "none",
  intercept: true,
  headers: true,
  absorb: [],
  factors: [],
  cluster: [],
  panel: null,
  time: null,
  weights: null,
  instruments: [],
  endogenous: [],
  window: null,
  step: 1,
  expanding: false,
  trim: 0.15,
} as Options);

const CHOICES: Record<string, readonly string[]> = {
  form: ["log-log", "log-level", "level-log", "level-level"],
  estimator: ["ols", "ppml", "2sls"],
  se: ["HC3", "HC0", "HC1", "HC2", "classical", "HAC", "cluster", "DK"],
  zeros: ["stop", "drop", "shift", "ihs"],
  at: ["mean", "median"],
  retransform: ["duan", "normal", "none"],
  interval: ["none", "mean", "individual"],
  intercept: ["true", "false"],
  headers: ["true", "false"],
  expanding: ["true", "false"],
};

export const OPTION_KEYS = [
  "form", "levels", "estimator", "se", "lags", "level", "zeros", "shift", "at",
  "retransform", "interval", "intercept", "headers",
  "absorb", "factors", "cluster", "panel", "time", "weights", "instruments", "endogenous",
  "window", "step", "expanding", "trim",
] as const;

/** How many columns a role option may name. */
const ROLE_LIMIT: Record<string, number> = {
  absorb: 2, cluster: 2, panel: 1, time: 1, weights: 1, factors: Infinity, instruments: Infinity, endogenous: Infinity,
};

function columnList(key: string, value: string): string[] {
  const list = value.split(",").map((s) => s.trim()).filter((s) => s !== "");
  const limit = ROLE_LIMIT[key];
  if (list.length > limit) {
    fail(`${key}= takes ${limit === 1 ? "one column" : `at most ${limit} columns`} (it names ${list.length}: ${list.join(", ")})`);
  }
  const seen = new Set<string>();
  for (const c of list) {
    if (seen.has(c.toLowerCase())) fail(`${key}= names ${c} twice; name each column once`);
    seen.add(c.toLowerCase());
  }
  return list;
}

function wholeNumber(key: string, raw: string, min: number): number {
  const v = number(key, raw);
  if (!Number.isInteger(v) || v < min) fail(`${key}=${raw} must be a whole number ${min} or more (for example ${key}=${Math.max(min, key === "window" ? 52 : 1)})`);
  return v;
}

function choose(key: string, raw: string): string {
  const list = CHOICES[key];
  const hit = list.find((c) => c.toLowerCase() === raw.toLowerCase());
  if (hit !== undefined) return hit;
  const hint = nearest(raw, list);
  return fail(`${key}=${cut(raw)} is not a valid choice; did you mean ${key}=${hint}? (valid: ${list.join(", ")})`);
}

function number(key: string, raw: string): number {
  // Number("") is 0 and Number("0x10") is 16: accept plain decimal notation only.
  if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(raw)) fail(`${key}=${cut(raw)} is not a number; write it like ${key}=${key === "lags" ? "4" : key === "level" ? "0.95" : "1"}`);
  return Number(raw);
}

/**
 * Parses the options text of a cell function.
 * @param text the options argument as the host passes it (null when omitted)
 * @returns the options with defaults filled in
 * @example parseOptions("form=log-level; se=HC1").se // "HC1"
 */
export function parseOptions(text: unknown): Options {
  const o: Options = { ...DEFAULTS, levels: [], absorb: [], factors: [], cluster: [], instruments: [], endogenous: [] };
  if (text === null || text === undefined || text === "") return o;
  if (typeof text !== "string") {
    return fail(`options must be text like "form=log-log; se=HC3", not ${typeof text === "number" ? "the number " + text : "a " + typeof text}`);
  }
  const seen = new Set<string>();
  for (const part of text.split(";")) {
    const item = part.trim();
    if (item === "") continue;
    const eqs = item.split("=").length - 1;
    if (eqs > 1) {
      // Two options in one part: typed with a comma or a space between them instead of ";".
      const fixed = item.replace(/\s*[,\s]\s*(?=[A-Za-z]+\s*=)/g, "; ");
      fail(`${quote(item)} holds ${eqs} options: separate options with ";", not "," or a space (write ${quote(fixed, 80)})`);
    }
    const eq = item.indexOf("=");
    if (eq <= 0) fail(`${quote(item)} in the options is not of the form key=value (for example se=HC3)`);
    const rawKey = item.slice(0, eq).replace(/\s+/g, "").toLowerCase();
    // Spaces inside a value are ignored, except in levels=, whose column names may hold them.
    const rawValue = item.slice(eq + 1).trim();
    const value = rawKey === "levels" ? rawValue : rawValue.replace(/\s+/g, "");
    const key = (OPTION_KEYS as readonly string[]).includes(rawKey) ? rawKey : "";
    if (key === "") fail(`unknown option ${quote(rawKey)}; did you mean ${nearest(rawKey, OPTION_KEYS)}? (options: ${OPTION_KEYS.join(", ")})`);
    if (value === "") fail(`option ${key} has no value; write ${key}=${key in CHOICES ? CHOICES[key][0] : "…"}`);
    if (seen.has(key)) fail(`option ${key} is given twice; keep one`);
    seen.add(key);
    switch (key) {
      case "form": o.form = choose(key, value) as Form; break;
      case "estimator": o.estimator = choose(key, value) as Estimator; break;
      case "se": o.se = choose(key, value) as SeType; break;
      case "zeros": o.zeros = choose(key, value) as ZeroPolicy; break;
      case "at": o.at = choose(key, value) as AtPoint; break;
      case "retransform": o.retransform = choose(key, value) as Retransform; break;
      case "interval": o.interval = choose(key, value) as IntervalKind; break;
      case "intercept": o.intercept = choose(key, value) === "true"; break;
      case "headers": o.headers = choose(key, value) === "true"; break;
      case "levels": o.levels = value.split(",").map((s) => s.trim()).filter((s) => s !== ""); break;
      case "lags": {
        const v = number(key, value);
        if (!Number.isInteger(v) || v < 0) fail(`lags=${cut(value)} must be a whole number 0 or more (for example lags=4)`);
        o.lags = v;
        break;
      }
      case "level": {
        const v = number(key, value);
        if (!(v >= 0.5 && v <= 0.999)) fail(`level=${cut(value)} must lie between 0.5 and 0.999 (for example level=0.95; write 0.9, not 90)`);
        o.level = v;
        break;
      }
      case "absorb": case "factors": case "cluster": case "instruments": case "endogenous":
        o[key] = columnList(key, value);
        break;
      case "panel": case "time": case "weights":
        o[key] = columnList(key, value)[0] ?? null;
        break;
      case "window": o.window = wholeNumber(key, value, 1); break;
      case "step": o.step = wholeNumber(key, value, 1); break;
      case "expanding": o.expanding = choose(key, value) === "true"; break;
      case "trim": {
        const v = number(key, value);
        if (!(v >= 0.05 && v <= 0.45)) fail(`trim=${value} must lie between 0.05 and 0.45 (for example trim=0.15: no break in the first or last 15% of rows)`);
        o.trim = v;
        break;
      }
      case "shift": {
        const v = number(key, value);
        if (!(v > 0) || !Number.isFinite(v)) fail(`shift=${cut(value)} must be a number above 0 (for example shift=1)`);
        o.shift = v;
        break;
      }
    }
  }
  // lags= only changes HAC and Driscoll–Kraay errors: given with any other se it would be silently ignored.
  if (o.lags !== null && o.se !== "HAC" && o.se !== "DK") fail(`lags=${o.lags} applies only to se=HAC (Newey–West errors) and se=DK (Driscoll–Kraay)${o.se ? `, not se=${o.se}` : "; the default errors are HC3 (HC1 for ppml)"}: add se=HAC, or remove lags=`);
  return o;
}

export { seTypeOf } from "./estimators";

/**
 * The options that change the fitted model (not how it is read): part of the fit cache key. Every
 * role column is in it, since a blank key or weight leaves its row out of the fit.
 */
export function modelKey(o: Options): string {
  const roles = [o.absorb, o.factors, o.cluster, [o.panel ?? ""], [o.time ?? ""], [o.weights ?? ""], o.instruments, o.endogenous]
    .map((l) => l.map((c) => c.toLowerCase()).join(","));
  return [o.form, o.levels.join(","), o.estimator, o.zeros, o.zeros === "shift" ? o.shift : "", o.intercept, ...roles].join("|");
}
