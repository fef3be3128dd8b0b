/**
 * Cell functions that read a fit back in the original units and test what the logs were taken for:
 * SMEARING, PREDICT, HETEROTEST, NORMALTEST, TESTS, FORMCHECK.
 */
import { seTypeOf, type Form, type Options } from "../engine/options";
import { estimatorOf } from "../engine/estimators";
import { count, cut, fail, nearest, quote, unavailable, ElxProblem } from "../engine/problems";
import { asMatrix, isHeaderRow, keyText, originOf, xColumnNames } from "../engine/intake";
import { apply, LEVEL, matchName } from "../engine/transforms";
import { predictRow, retransformFactor } from "../engine/retransform";
import { heteroTest, jarqueBera, jarqueBeraOf, moments, reset, breuschPaganKoenker, breuschPaganOf, breuschPaganOriginal, white, whiteSpecial, type HeteroTest, type TestResult } from "../engine/specTests";
import { boxCoxOnLogs, levelOnLogFactor, peTest, readEvidence, type LevelModel } from "../engine/formCheck";
import { EXACT_FIT, OlsFit } from "../engine/fit";
import { getOlsFit, type AnyFit } from "../engine/model";
import { fitFor, olsFor } from "./regression";
import { guarded, hostError, intervalHeaders, levelLabel, num, options, originsOf, table, toHostError, type Cell, type Table } from "./host";

export function smearingValue(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    // 2SLS: the factor of its structural residuals (the one PREDICT applies); see README.md
    const fit = estimatorOf(o).smearsResiduals ? (fitFor(y, x, o, invocation) as unknown as OlsFit) : olsFor(y, x, o, invocation, "ELX.SMEARING");
    if (o.retransform === "none") fail("retransform=none asks for no factor; use retransform=duan (default) or retransform=normal");
    return [[num(retransformFactor(fit, o.retransform))]];
  });
}

/** The transformed design row for one row of new_x, or a problem naming that row. */
function designRow(fit: AnyFit, values: unknown[], map: number[], rowLabel: string): Float64Array {
  const k = fit.k;
  const x0 = new Float64Array(k);
  let j0 = 0;
  if (fit.intercept) {
    x0[0] = 1;
    j0 = 1;
  }
  fit.data.xNames.forEach((name, j) => {
    const raw = values[map[j]];
    let v: number;
    if (typeof raw === "number" && Number.isFinite(raw)) v = raw;
    else if (typeof raw === "boolean") v = raw ? 1 : 0;
    else fail(`${rowLabel}: ${name} is ${raw === null || raw === undefined || raw === "" ? "blank" : "not a number"}; give a number`);
    const t = fit.data.xTransforms[j];
    if (t.kind === "log" && !(v > 0)) fail(`${rowLabel}: ${name} is ${v === 0 ? "zero (or blank)" : "negative"}, which the log of the fitted model cannot take`);
    if (t.kind === "shift" && !(v + t.c > 0)) fail(`${rowLabel}: ${name} is at or below −${t.c}, which log(v + ${t.c}) cannot take`);
    x0[j0 + j] = apply(t, v);
  });
  return x0;
}

export function predictTable(y: unknown, x: unknown, newX: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = fitFor(y, x, o, invocation);
    const cells = asMatrix(newX, "new_x");
    const addrs = (invocation as { parameterAddresses?: unknown[] } | undefined)?.parameterAddresses;
    const origin = Array.isArray(addrs) ? originOf(addrs[2]) : null;
    const names = fit.data.xNames;
    const absorbed = fit.data.roles.absorb.map((k) => k.name);
    // The header rule and the names are those of x (readYX), so a new_x with x's header matches it.
    const header = isHeaderRow(cells[0]);
    let map: number[];
    let keyMap: number[] = [];
    if (absorbed.length > 0 && !header) {
      fail(`with absorb= new_x needs a header row naming its columns, ${absorbed.join(" and ")} among them (each row's fixed effect is added to its prediction)`);
    }
    if (header) {
      const given = xColumnNames(fit.data.yName, cells[0]);
      map = names.map((name) => {
        const i = matchName(name, given);
        if (i < 0) fail(`new_x has no column ${cut(name)}; its header names are ${given.map((g) => cut(g)).join(", ")}; give new_x the same columns as x`);
        return i;
      });
      keyMap = absorbed.map((name) => {
        const i = matchName(name, given);
        if (i < 0) fail(`new_x has no column ${cut(name)}: with absorb=${absorbed.join(",")} each row's fixed effect is added to its prediction, so new_x needs the ${absorbed.join(" and ")} column${absorbed.length === 1 ? "" : "s"} with the same header as in x`);
        return i;
      });
      // other role columns of x (cluster=, weights=, time=, …) may come along and are not read
      const known = [...names, ...fit.data.columnNames];
      given.forEach((g) => {
        if (matchName(g, known) < 0) fail(`new_x column ${quote(g)} is not a column of x; did you mean ${cut(nearest(g, names) ?? "")}? (x has ${names.map((n) => cut(n)).join(", ")})`);
      });
    } else {
      if (cells[0].length !== names.length) fail(`new_x has ${count(cells[0].length, "column")} but x has ${names.length} (${names.join(", ")}); give new_x the same columns, in the same order, or add a header row to match them by name`);
      map = names.map((_, j) => j);
    }
    if (o.interval !== "none" && fit.absorbed > 0) {
      unavailable(`interval=${o.interval} is not offered with absorb=: the uncertainty of the estimated fixed effects is not computed here, so an interval would be too narrow; use interval=none`);
    }
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const first = header ? 1 : 0;
    const width = o.interval === "none" ? 1 : 3;
    const body: Table = [];
    const startRow = (origin?.row ?? 1) + first;
    for (let i = first; i < cells.length; i++) {
      try {
        const rowLabel = `new_x row ${startRow + i - first}`;
        const x0 = designRow(fit, cells[i], map, rowLabel);
        const effect = fit.absorbedEffect(keyMap.map((c) => keyText(cells[i][c])), rowLabel);
        const p = predictRow(fit, x0, o.retransform, o.interval, o.level, cov, effect);
        body.push(width === 1 ? [num(p.value)] : [num(p.value), num(p.lower), num(p.upper)]);
      } catch (e) {
        if (!(e instanceof ElxProblem)) throw e;
        const err = toHostError(e);
        body.push(new Array<Cell>(width).fill(err));
      }
    }
    if (body.length === 0) fail("new_x has a header row but no rows to predict");
    const head = [`Predicted ${fit.data.yName}`, ...intervalHeaders(o.level)].slice(0, width);
    return header && o.headers ? [head, ...body] : body;
  });
}

const HETERO_TESTS: readonly HeteroTest[] = ["bp", "bp-original", "white", "white-special"];

/**
 * The residual tests (Breusch–Pagan, White, Jarque–Bera, RESET) are those of unweighted least
 * squares; with fixed effects they read the residuals of the full model (effects included) and, for
 * Breusch–Pagan and White, the regressors without the absorbed indicators.
 */
function residualTestFit(y: unknown, x: unknown, o: Options, invocation: unknown, what: string): OlsFit {
  const fit = olsFor(y, x, o, invocation, what);
  if (fit.data.roles.weights) {
    fail(`${what}: the residual tests here assume unweighted least squares, and weights= makes the fit weighted; run the test without weights= (or read the robust errors, which allow any spread)`);
  }
  return fit;
}

function memoTest(fit: OlsFit, key: string, run: (f: OlsFit) => TestResult): TestResult {
  return fit.memo(`test:${key}`, () => run(fit));
}

export function heteroValue(y: unknown, x: unknown, test: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    let which: HeteroTest = "bp";
    if (test !== null && test !== undefined && test !== "") {
      const t = String(test).trim().toLowerCase();
      if (t.includes("=")) {
        // Options typed into the test argument: ELX.HETEROTEST(y, x, "zeros=drop").
        fail(`the test argument holds options (${quote(String(test).trim())}): options go in the last argument, after the test, as in ELX.HETEROTEST(y, x, "bp", ${quote(String(test).trim())}); the test is one of ${HETERO_TESTS.join(", ")}, or leave it empty for bp`);
      }
      const hit = HETERO_TESTS.find((h) => h === t);
      if (!hit) fail(`test ${quote(String(test).trim())} is not known; did you mean ${nearest(t, HETERO_TESTS)}? (tests: ${HETERO_TESTS.join(", ")})`);
      which = hit;
    }
    const fit = residualTestFit(y, x, o, invocation, "ELX.HETEROTEST");
    return [[num(memoTest(fit, which, (f) => heteroTest(f, which)).pValue)]];
  });
}

export function normalValue(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const fit = residualTestFit(y, x, options(opts), invocation, "ELX.NORMALTEST");
    return [[num(memoTest(fit, "jb", jarqueBera).pValue)]];
  });
}

/** One row of ELX.TESTS: the test's label, and its result or the problem that stopped it. */
export interface TestRow {
  label: string;
  result: TestResult | null;
  problem: ElxProblem | null;
}

/** The tests of ELX.TESTS on a fit, in its order (each memoised in the fit). */
export function testRows(fit: OlsFit): TestRow[] {
  const runs: [string, string, (f: OlsFit) => TestResult][] = [
    ["Breusch–Pagan (Koenker, studentized)", "bp", breuschPaganKoenker],
    ["Breusch–Pagan (original)", "bp-original", breuschPaganOriginal],
    ["White", "white", white],
    ["White (special form)", "white-special", whiteSpecial],
    ["Jarque–Bera", "jb", jarqueBera],
    ["RESET (fitted², fitted³)", "reset", reset],
  ];
  return runs.map(([label, key, run]) => {
    try {
      return { label, result: memoTest(fit, key, run), problem: null };
    } catch (e) {
      if (!(e instanceof ElxProblem)) throw e;
      return { label, result: null, problem: e };
    }
  });
}

/** The fit ELX.TESTS reads (least squares without weights), for the pane's typed view too. */
export function testsFit(y: unknown, x: unknown, o: Options, invocation: unknown): OlsFit {
  return residualTestFit(y, x, o, invocation, "ELX.TESTS");
}

export function testsTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = testsFit(y, x, o, invocation);
    const body: Table = testRows(fit).map(({ label, result: r, problem }) => {
      if (r) return [label, num(r.statistic), r.df.length === 1 ? r.df[0] : r.df.join(", "), num(r.pValue), `${r.pValue < 0.05 ? "rejected" : "not rejected"}: ${r.reading}`];
      const err = toHostError(problem);
      return [label, err, err, err, (problem as ElxProblem).message];
    });
    return table(["Test", "Statistic", "df", "p-value", "Reading at the 5% level"], body, o);
  });
}

/** The same rows and x side with y back in levels. */
function levelTwin(logFit: OlsFit): OlsFit {
  const d = logFit.data;
  const y = new Float64Array(d.n);
  for (let i = 0; i < d.n; i++) y[i] = Math.exp(d.y[i]);
  return new OlsFit({ ...d, y, yTransform: LEVEL }, logFit.intercept);
}

function otherSide(form: Form, y: "log" | "level"): Form {
  const xSide = form.endsWith("-log") ? "log" : "level";
  return `${y}-${xSide}` as Form;
}

export function formCheckTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    if (o.estimator === "ppml") fail("ELX.FORMCHECK compares least-squares fits of y in logs and in levels; drop estimator=ppml");
    if (o.absorb.length > 0) fail("ELX.FORMCHECK is not offered with absorb= yet (Box–Cox and the PE test are computed here for fits without fixed effects): run it without absorb=, or compare the forms by the RESET row of ELX.TESTS, which absorbs the fixed effects");
    if (o.weights !== null) fail("ELX.FORMCHECK compares unweighted least-squares fits; weights= makes the fit weighted: run it without weights=");
    if (o.zeros === "shift" || o.zeros === "ihs") fail(`ELX.FORMCHECK compares plain logs with levels; zeros=${o.zeros} changes the log, so Box–Cox does not apply: use zeros=stop or zeros=drop on data with y above zero`);
    const [yo, xo] = originsOf(invocation);
    const get = (form: Form): OlsFit => getOlsFit({ y, x, options: { ...o, form }, yOrigin: yo ?? null, xOrigin: xo ?? null }, "ELX.FORMCHECK");
    // The log fit first; only when it fails (and zeros= does not drop rows) is y read in levels, for
    // the message that fits a form comparison (the log fit's would name the log).
    let logFit: OlsFit;
    try {
      logFit = get(otherSide(o.form, "log"));
    } catch (e) {
      if (e instanceof ElxProblem && o.zeros !== "drop") {
        const probe = get(otherSide(o.form, "level"));
        const yv = probe.data.y;
        for (let i = 0; i < yv.length; i++) {
          if (!(yv[i] > 0)) {
            fail(`Box–Cox and the log of y need y above zero, and ${probe.data.yName} has a zero or negative value (row ${probe.data.rowNumbers[i]}); the comparison is undefined: use zeros=drop to compare on the rows above zero, or estimator=ppml, which keeps zeros`);
          }
        }
      }
      throw e;
    }
    // The level fit on exactly the rows of the log fit (under zeros=drop those are the rows above zero).
    // Solved on the log fit's factor when it is reused; otherwise fitted anew.
    const levelFit: LevelModel = logFit.memo("levelOnFactor", () => levelOnLogFactor(logFit, EXACT_FIT)) ?? logFit.memo("levelTwin", () => levelTwin(logFit));
    const se = seTypeOf(o);
    const bc = logFit.memo(`boxcox:${o.level}`, () => boxCoxOnLogs(logFit, o.level, levelFit));
    const pe = logFit.memo(`pe:${se}:${o.lags}`, () => peTest(logFit, levelFit, se, o.lags));
    const side = (f: OlsFit) => {
      f.requireResidualVariation("the residual checks");
      return {
        skew: moments(f.resid).skewness,
        jb: memoTest(f, "jb", jarqueBera).pValue,
        bp: memoTest(f, "bp", breuschPaganKoenker).pValue,
      };
    };
    const lg = side(logFit);
    const lv = levelFit instanceof OlsFit ? side(levelFit) : logFit.memo("levelChecks", () => ({
      skew: moments(levelFit.scaledResid).skewness,
      jb: jarqueBeraOf(levelFit.scaledResid).pValue,
      bp: breuschPaganOf(logFit, levelFit.scaledResid).pValue,
    }));
    const reading = readEvidence(bc, pe);
    const level = levelLabel(o.level);
    const beyond = (end: "lower" | "upper") => hostError("na", `the ${level} interval extends beyond λ = ${end === "lower" ? "−5" : "5"}: the likelihood is flat in λ`);
    const body: Table = [
      ["Box–Cox λ̂", num(bc.lambda), bc.onBoundary ? "at the edge of [−2, 2]" : ""],
      [`Box–Cox interval lower (${level})`, bc.lower === null ? beyond("lower") : num(bc.lower), ""],
      [`Box–Cox interval upper (${level})`, bc.upper === null ? beyond("upper") : num(bc.upper), ""],
      ["Box–Cox LR p-value", num(bc.pLog), num(bc.pLevels)],
      ["PE test t (this form, other as alternative)", num(pe.logs.t), num(pe.levels.t)],
      ["PE test p-value", num(pe.logs.p), num(pe.levels.p)],
      ["PE test: rows left out (fitted level ≤ 0)", 0, pe.levels.leftOut],
      ["Residual skewness", num(lg.skew), num(lv.skew)],
      ["Jarque–Bera p-value", num(lg.jb), num(lv.jb)],
      ["Breusch–Pagan p-value", num(lg.bp), num(lv.bp)],
      ["Reading", reading.verdict, reading.why],
    ];
    return table(["Check", "y in logs", "y in levels"], body, o);
  });
}

