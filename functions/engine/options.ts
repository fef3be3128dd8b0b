/**
 * Options text: "key=value; key=value", keys and values case-insensitive, spaces ignored.
 *
 * One parser for every function, so a formula can change from ELX.FIT to ELX.SUMMARY by its name
 * alone. Unknown keys and values are a #VALUE! problem naming the nearest valid one. Options that a
 * function does not use are accepted and ignored (they matter to its neighbours).
 */
import { fail, nearest } from "./problems";

export type Form = "log-log" | "log-level" | "level-log" | "level-level";
export type Estimator = "ols" | "ppml";
export type SeType = "classical" | "HC0" | "HC1" | "HC2" | "HC3" | "HAC";
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
}

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
} as Options);

const CHOICES: Record<string, readonly string[]> = {
  form: ["log-log", "log-level", "level-log", "level-level"],
  estimator: ["ols", "ppml"],
  se: ["HC3", "HC0", "HC1", "HC2", "classical", "HAC"],
  zeros: ["stop", "drop", "shift", "ihs"],
  at: ["mean", "median"],
  retransform: ["duan", "normal", "none"],
  interval: ["none", "mean", "individual"],
  intercept: ["true", "false"],
  headers: ["true", "false"],
};

export const OPTION_KEYS = [
  "form", "levels", "estimator", "se", "lags", "level", "zeros", "shift", "at",
  "retransform", "interval", "intercept", "headers",
] as const;

function choose(key: string, raw: string): string {
  const list = CHOICES[key];
  const hit = list.find((c) => c.toLowerCase() === raw.toLowerCase());
  if (hit !== undefined) return hit;
  const hint = nearest(raw, list);
  return fail(`${key}=${raw} is not a valid choice; did you mean ${key}=${hint}? (valid: ${list.join(", ")})`);
}

function number(key: string, raw: string): number {
  // Number("") is 0 and Number("0x10") is 16: accept plain decimal notation only.
  if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(raw)) fail(`${key}=${raw} is not a number; write it like ${key}=${key === "lags" ? "4" : key === "level" ? "0.95" : "1"}`);
  return Number(raw);
}

/**
 * Parses the options text of a cell function.
 * @param text the options argument as the host passes it (null when omitted)
 * @returns the options with defaults filled in
 * @example parseOptions("form=log-level; se=HC1").se // "HC1"
 */
export function parseOptions(text: unknown): Options {
  const o: Options = { ...DEFAULTS, levels: [] };
  if (text === null || text === undefined || text === "") return o;
  if (typeof text !== "string") {
    return fail(`options must be text like "form=log-log; se=HC3", not ${typeof text === "number" ? "the number " + text : "a " + typeof text}`);
  }
  const seen = new Set<string>();
  for (const part of text.split(";")) {
    const item = part.replace(/\s+/g, "");
    if (item === "") continue;
    const eq = item.indexOf("=");
    if (eq <= 0) fail(`"${part.trim()}" in the options is not of the form key=value (for example se=HC3)`);
    const rawKey = item.slice(0, eq).toLowerCase();
    const value = item.slice(eq + 1);
    const key = (OPTION_KEYS as readonly string[]).includes(rawKey) ? rawKey : "";
    if (key === "") fail(`unknown option "${rawKey}"; did you mean ${nearest(rawKey, OPTION_KEYS)}? (options: ${OPTION_KEYS.join(", ")})`);
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
      case "levels": o.levels = value.split(",").filter((s) => s !== ""); break;
      case "lags": {
        const v = number(key, value);
        if (!Number.isInteger(v) || v < 0) fail(`lags=${value} must be a whole number 0 or more (for example lags=4)`);
        o.lags = v;
        break;
      }
      case "level": {
        const v = number(key, value);
        if (!(v >= 0.5 && v <= 0.999)) fail(`level=${value} must lie between 0.5 and 0.999 (for example level=0.95; write 0.9, not 90)`);
        o.level = v;
        break;
      }
      case "shift": {
        const v = number(key, value);
        if (!(v > 0) || !Number.isFinite(v)) fail(`shift=${value} must be a number above 0 (for example shift=1)`);
        o.shift = v;
        break;
      }
    }
  }
  // lags= only changes HAC errors: given with any other se it would be silently ignored.
  if (o.lags !== null && o.se !== "HAC") fail(`lags=${o.lags} applies only to se=HAC (Newey–West errors)${o.se ? `, not se=${o.se}` : "; the default errors are HC3 (HC1 for ppml)"}: add se=HAC, or remove lags=`);
  return o;
}

/** The covariance type in force: the one asked for, else the estimator's default. */
export function seTypeOf(o: Options): SeType {
  return o.se ?? (o.estimator === "ppml" ? "HC1" : "HC3");
}

/** The options that change the fitted model (not how it is read): part of the fit cache key. */
export function modelKey(o: Options): string {
  return [o.form, o.levels.join(","), o.estimator, o.zeros, o.zeros === "shift" ? o.shift : "", o.intercept].join("|");
}
