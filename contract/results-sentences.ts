/**
 * The reporting rules of a manuscript, in one place for the server (tables,
 * sentences, the report bundle) and the web app (the results sentences on
 * screen): how a region's result is written in the style of the APA
 * Publication Manual, 7th ed. (2020). Sections named from memory:
 *
 * - 6.36 (decimal fractions): no zero before the decimal point for a
 *   quantity that cannot exceed 1 in size (r, ICC, p), a zero where it can
 *   (t, F, z, d, raw estimates); correlations and inferential statistics to
 *   two decimals; exact p to three decimals, and "p < .001" below .001.
 * - 6.43 (statistics in text): degrees of freedom in parentheses after the
 *   symbol, "t(41.3) = 2.87", "F(39, 39) = 6.10"; a confidence interval as
 *   "95% CI [LL, UL]".
 * - 6.44 (statistical symbols): symbols written with Latin letters in
 *   italics (t, F, z, r, p, d, M, b, N, U, T), abbreviations such as CI and
 *   ICC in roman; subscripts in roman (r_s, p_adj).
 *
 * Decisions beyond the manual (each named where it is applied):
 * - The "< .001" rule is applied to the exact p, so p = 0.0005 (which would
 *   round to .001) is written "p < .001": writing "p = .001" would claim a
 *   value the test did not give. "p = .000" is never written.
 * - A p that rounds to 1.000 (≥ .9995) is written "p > .999" (common
 *   practice, no source): the manual has no rule for it, and "p = 1.000"
 *   would break the no-leading-zero style.
 * - Fractional df (Welch–Satterthwaite) to one decimal, whole df as whole
 *   numbers (the convention; the manual's examples show whole df).
 * - Negative numbers take the minus sign U+2212 in typeset text (Markdown,
 *   Word, the screen, plain text), as typeset statistics do (value from
 *   memory); LaTeX gets an ASCII hyphen-minus in math mode, `$-$`.
 * - A correction over regions adds the adjusted p after the unadjusted one,
 *   with the correction named: "p = .016, p_adj = .048 (Holm)"; the name is
 *   `correctionLabels` (labels.ts). Resampled p-values say so:
 *   "permutation p = .006", "bootstrap p = .012".
 * - Raw estimates (slopes, differences, means) keep two decimals, or two
 *   significant digits when smaller than 0.1 (common practice, no source).
 * - Rank sums (U, T⁺, S) are written as they are: whole numbers, or one
 *   decimal for the halves ties give (common practice, no source).
 * - A missing part (no interval, no df, no statistic) is left out of the
 *   sentence; a table cell without a value shows an em dash "—" (value
 *   from memory).
 *
 * Output is a list of runs `{ text, italic, script? }` so each medium marks
 * italics its own way: Markdown `*t*`, LaTeX `\textit{t}`, Word an italic
 * run, the screen italic text; `runsPlain` gives text without marks (CSV,
 * clipboard). Pure: imports types and labels only. Cost O(1) per region.
 */
import { correctionLabels } from "./labels";
import type { RegionResult } from "./spec";

/** One piece of a sentence with its marks. `script` sets a subscript ("adj") or a superscript ("+"). */
export interface TextRun {
  text: string;
  italic: boolean;
  script?: "sub" | "super";
}

/** The typographic minus sign (U+2212). */
export const MINUS = "\u2212";
/** What a table cell without a value shows. */
export const EMPTY_CELL = "\u2014";

/** What a sentence needs to know of the fit besides the region: from its result and recipe. */
export interface SentenceContext {
  kind: string;
  estimator: string;
  inference: string;
  correction: string;
  /** Weighted by first-level standard errors (a meta-regression). */
  weighted: boolean;
  /** The tested term is adjusted for other terms (covariates, a group): r is a partial r. */
  adjusted: boolean;
}

/** The context of a fit: its result's kind, estimator, inference and correction, and the recipe's weights and covariates. */
export function sentenceContextOf(
  result: Readonly<Record<string, unknown>>,
  recipe: Readonly<Record<string, unknown>>,
): SentenceContext {
  const text = (v: unknown, fallback: string) => (typeof v === "string" ? v : fallback);
  const covariates = Array.isArray(recipe.covariates) ? recipe.covariates.length : 0;
  return {
    kind: text(result.kind ?? recipe.kind, "one-sample"),
    estimator: text(result.estimator ?? recipe.estimator, "ols"),
    inference: text(result.inference ?? recipe.inference, "parametric"),
    correction: text(result.correction ?? recipe.correction, "none"),
    weighted: recipe.weights === "first-level-se",
    // An association's group enters as a covariate; a two-group fit's group is what it compares.
    adjusted: covariates > 0 || (recipe.kind === "association" && typeof recipe.group === "string"),
  };
}

// ---------------------------------------------------------------- numbers

function finite(v: unknown): v is number {
  return typeof v === "number" && Number.isFinite(v);
}

/** Groups thousands (APA 6.38, commas in numbers of 1,000 or more; value from memory). */
function group(unsigned: string): string {
  const [whole, fraction] = unsigned.split(".");
  const grouped = whole.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
  return fraction === undefined ? grouped : `${grouped}.${fraction}`;
}

/** Signs a rounded magnitude: the minus sign, never on a zero ("−0.00" is written "0.00"). */
function signed(value: number, unsigned: string): string {
  return value < 0 && /[1-9]/.test(unsigned) ? MINUS + unsigned : unsigned;
}

/** A quantity that can exceed 1 (t, F, z, d): fixed decimals with a leading zero. "2.87", "−0.45". */
export function formatStat(value: number, decimals = 2): string {
  return signed(value, group(Math.abs(value).toFixed(decimals)));
}

/** A quantity that cannot exceed 1 in size (r, ICC, a proportion): no leading zero. ".31", "−.31", "1.00". */
export function formatBounded(value: number, decimals = 2): string {
  return signed(value, Math.abs(value).toFixed(decimals).replace(/^0\./, "."));
}

/** Degrees of freedom: whole as whole ("58"), fractional to one decimal ("41.3"). */
export function formatDf(df: number): string {
  const whole = Math.round(df);
  return Math.abs(df - whole) < 1e-9 ? group(String(whole)) : group(df.toFixed(1));
}

/** A count with thousands grouped: 1234 → "1,234". */
export function formatCount(n: number): string {
  return group(String(Math.round(n)));
}

/** A rank sum or a count that may end in a half: "123", "123.5", "1,234". */
export function formatRankSum(value: number): string {
  const whole = Math.round(value);
  return Math.abs(value - whole) < 1e-9
    ? signed(value, group(String(Math.abs(whole))))
    : formatStat(value, 1);
}

/** Decimals for a raw estimate: two, or two significant digits below 0.1 (at most 6). */
export function rawDecimals(value: number): number {
  const size = Math.abs(value);
  if (size === 0 || size >= 0.1) return 2;
  return Math.min(6, Math.max(2, 1 - Math.floor(Math.log10(size))));
}

/** A raw estimate (slope, difference, mean) with `decimals` (default `rawDecimals(value)`). */
export function formatRaw(value: number, decimals = rawDecimals(value)): string {
  return formatStat(value, decimals);
}

/**
 * A p-value's relation and digits, without the symbol: "= .016", "< .001",
 * "> .999" (rules in the module comment). Throws a RangeError outside [0, 1].
 */
export function pRelation(p: number): string {
  if (!Number.isFinite(p) || p < 0 || p > 1)
    throw new RangeError(`pRelation: p must lie in [0, 1] (got ${p})`);
  if (p < 0.001) return "< .001";
  const text = p.toFixed(3);
  if (text === "1.000") return "> .999";
  return `= ${text.replace(/^0\./, ".")}`;
}

/** A p-value for a table cell: ".016", "< .001", "> .999". */
export function pCell(p: number): string {
  const relation = pRelation(p);
  return relation.startsWith("= ") ? relation.slice(2) : relation;
}

// ---------------------------------------------------------------- runs

const plain = (text: string): TextRun => ({ text, italic: false });
const italic = (text: string): TextRun => ({ text, italic: true });
const sub = (text: string): TextRun => ({ text, italic: false, script: "sub" });
const sup = (text: string): TextRun => ({ text, italic: false, script: "super" });

/** Joins consecutive runs with the same marks (so each medium writes one mark per stretch). */
function merged(runs: readonly TextRun[]): TextRun[] {
  const out: TextRun[] = [];
  for (const r of runs) {
    if (r.text === "") continue;
    const last = out[out.length - 1];
    if (last && last.italic === r.italic && last.script === r.script) last.text += r.text;
    else out.push({ ...r });
  }
  return out;
}

function extra(region: RegionResult, key: string): unknown {
  if (region[key] !== undefined) return region[key];
  const extras = region.extras as Record<string, unknown> | undefined;
  return extras?.[key];
}

/** `{ value, ciLow, ciHigh }` of an effect size such as cohensD, or null. */
function effectOf(
  region: RegionResult,
  key: string,
): { value: number; ci: [number, number] | null } | null {
  const e = extra(region, key) as
    | { value?: unknown; ciLow?: unknown; ciHigh?: unknown }
    | undefined;
  if (!e || typeof e !== "object" || !finite(e.value)) return null;
  return { value: e.value, ci: finite(e.ciLow) && finite(e.ciHigh) ? [e.ciLow, e.ciHigh] : null };
}

/** ", 95% CI [LL, UL]" with the given number format, or nothing when an end is missing. */
function ciRuns(low: unknown, high: unknown, format: (v: number) => string): TextRun[] {
  if (!finite(low) || !finite(high)) return [];
  return [plain(`, 95% CI [${format(low)}, ${format(high)}]`)];
}

/** The symbol of a region's correlation: r, r_s (Spearman), r_pb (percentage bend), "skipped r"; "partial" when adjusted. */
export function correlationSymbol(ctx: SentenceContext): TextRun[] {
  const partial = ctx.adjusted ? [plain("partial ")] : [];
  if (ctx.estimator === "rank") return [...partial, italic("r"), sub("s")];
  if (ctx.estimator === "bend") return [italic("r"), sub("pb")];
  if (ctx.estimator === "skipped") return [plain("skipped "), italic("r")];
  return [...partial, italic("r")];
}

/** True when the association's statistic is Spearman's S (exact or Edgeworth p), not t (server/stats/fit-methods.ts method words). */
function isSpearmanS(region: RegionResult): boolean {
  return typeof region.method === "string" && region.method.includes("S = Σd²");
}

/**
 * The test statistic of a region with its df: "t(41.3) = 2.87", "F(39, 39) = 6.10",
 * "U = 123.5", "T⁺ = 45", "S = 1,234", "z = 2.10"; null without one (bootstrap).
 */
export function statisticRuns(region: RegionResult, ctx: SentenceContext): TextRun[] | null {
  const s = region.statistic;
  if (!finite(s)) return null;
  if (ctx.kind === "reliability") {
    const df1 = region.df1;
    const df2 = region.df2;
    const df = finite(df1) && finite(df2) ? `(${formatDf(df1)}, ${formatDf(df2)})` : "";
    return merged([italic("F"), plain(`${df} = ${formatStat(s)}`)]);
  }
  if (ctx.estimator === "rank" && !ctx.weighted) {
    if (ctx.kind === "two-group") return [italic("U"), plain(` = ${formatRankSum(s)}`)];
    if (ctx.kind === "one-sample") return [italic("T"), sup("+"), plain(` = ${formatRankSum(s)}`)];
    if (isSpearmanS(region)) return [italic("S"), plain(` = ${formatRankSum(s)}`)];
  }
  const df = finite(region.df) ? `(${formatDf(region.df)})` : "";
  // A weighted fit without the Knapp–Hartung adjustment tests against the normal distribution (no df).
  const symbol = ctx.weighted && !finite(region.df) ? "z" : "t";
  return [italic(symbol), plain(`${df} = ${formatStat(s)}`)];
}

/** "p = .016" (or "permutation p …", "bootstrap p …"), then the adjusted p with its correction. */
function pRuns(region: RegionResult, ctx: SentenceContext): TextRun[] {
  const prefix =
    ctx.inference === "permutation" && region.permutation
      ? "permutation "
      : ctx.inference === "bootstrap" && region.bootstrap
        ? "bootstrap "
        : "";
  const runs: TextRun[] = [plain(prefix), italic("p"), plain(` ${pRelation(region.p)}`)];
  if (ctx.correction !== "none" && finite(region.pAdjusted)) {
    const label =
      correctionLabels[ctx.correction as keyof typeof correctionLabels] ?? ctx.correction;
    runs.push(
      plain(", "),
      italic("p"),
      sub("adj"),
      plain(` ${pRelation(region.pAdjusted)} (${label})`),
    );
  }
  return runs;
}

/** The symbol of a raw estimate: M (a mean), M_diff (a difference of means), b (a model coefficient), or words for rank estimates. */
function estimateSymbol(ctx: SentenceContext): TextRun[] {
  if (ctx.estimator === "rank" && ctx.kind === "one-sample") return [plain("pseudomedian")];
  if (ctx.estimator === "rank" && ctx.kind === "two-group") return [plain("Hodges–Lehmann shift")];
  const model =
    ctx.adjusted || ctx.weighted || ctx.estimator === "huber" || ctx.estimator === "bisquare";
  if (!model && ctx.kind === "one-sample") return [italic("M")];
  if (!model && ctx.kind === "two-group") return [italic("M"), sub("diff")];
  return [italic("b")];
}

/** The estimate with its interval in the estimate's own decimals: "b = 0.42, 95% CI [0.10, 0.74]". */
function estimateRuns(region: RegionResult, ctx: SentenceContext): TextRun[] {
  const decimals = rawDecimals(region.estimate);
  const f = (v: number) => formatRaw(v, decimals);
  return [
    ...estimateSymbol(ctx),
    plain(` = ${f(region.estimate)}`),
    ...ciRuns(region.ciLow, region.ciHigh, f),
  ];
}

/**
 * The results sentence of one region as runs (see the module comment for
 * the rules). Shapes:
 * - association: "r(58) = .31, 95% CI [.06, .52], p = .016" (r_s, r_pb,
 *   skipped r, partial r); M-estimates lead with their robust t and give r
 *   after p;
 * - one-sample and two-group: "t(41.3) = 2.87, p = .006, d = 0.84, 95% CI
 *   [0.21, 1.46]" (d and its interval when the fit has them; otherwise the
 *   estimate with its interval); rank tests "U = 123.5, z = 2.10, p = .036,
 *   Hodges–Lehmann shift = …"; a bootstrap leads with the estimate and its
 *   bootstrap interval;
 * - reliability: "ICC(2,1) = .72, 95% CI [.55, .83], F(39, 39) = 6.10, p < .001".
 */
export function resultsSentence(region: RegionResult, ctx: SentenceContext): TextRun[] {
  const runs: TextRun[] = [];
  const p = pRuns(region, ctx);
  const stat = statisticRuns(region, ctx);
  if (ctx.kind === "reliability") {
    runs.push(plain(`ICC(2,1) = ${formatBounded(region.estimate)}`));
    runs.push(...ciRuns(region.ciLow, region.ciHigh, (v) => formatBounded(v)));
    if (stat) runs.push(plain(", "), ...stat);
    runs.push(plain(", "), ...p);
    return merged(runs);
  }
  if (ctx.kind === "association" && finite(region.r)) {
    const rRuns = [
      plain(` = ${formatBounded(region.r)}`),
      ...ciRuns(region.rCiLow, region.rCiHigh, (v) => formatBounded(v)),
    ];
    if ((ctx.estimator === "huber" || ctx.estimator === "bisquare") && stat) {
      runs.push(...stat, plain(", "), ...p, plain(", "), ...correlationSymbol(ctx), ...rRuns);
      return merged(runs);
    }
    const df = finite(region.df) ? `(${formatDf(region.df)})` : "";
    runs.push(...correlationSymbol(ctx), plain(df), ...rRuns, plain(", "), ...p);
    return merged(runs);
  }
  const d = effectOf(region, "cohensD");
  const dRuns = d
    ? [
        italic("d"),
        plain(` = ${formatStat(d.value)}`),
        ...(d.ci ? ciRuns(d.ci[0], d.ci[1], (v) => formatStat(v)) : []),
      ]
    : [];
  if (!stat) {
    // No test statistic (a bootstrap): the estimate and its interval lead, then p, then d alone.
    runs.push(...estimateRuns(region, ctx), plain(", "), ...p);
    if (d) runs.push(plain(", "), italic("d"), plain(` = ${formatStat(d.value)}`));
    return merged(runs);
  }
  runs.push(...stat);
  const z = region.z;
  if (ctx.estimator === "rank" && region.exact === false && finite(z))
    runs.push(plain(", "), italic("z"), plain(` = ${formatStat(z)}`));
  runs.push(plain(", "), ...p, plain(", "));
  runs.push(...(d ? dRuns : estimateRuns(region, ctx)));
  return merged(runs);
}

// ---------------------------------------------------------------- table cells

/** True when a fit's estimate is itself a correlation or an ICC (cannot exceed 1 in size): no leading zero. */
export function estimateIsBounded(ctx: SentenceContext): boolean {
  return (
    ctx.kind === "reliability" ||
    (ctx.kind === "association" &&
      (ctx.estimator === "rank" || ctx.estimator === "skipped" || ctx.estimator === "bend"))
  );
}

function withInterval(value: number, low: unknown, high: unknown, f: (v: number) => string) {
  return finite(low) && finite(high) ? `${f(value)} [${f(low)}, ${f(high)}]` : f(value);
}

/** A table's estimate cell: "0.42 [0.10, 0.74]" (raw, the estimate's decimals), ".31 [.06, .52]" (bounded). */
export function estimateCell(region: RegionResult, ctx: SentenceContext): string {
  if (estimateIsBounded(ctx))
    return withInterval(region.estimate, region.ciLow, region.ciHigh, (v) => formatBounded(v));
  const decimals = rawDecimals(region.estimate);
  return withInterval(region.estimate, region.ciLow, region.ciHigh, (v) => formatRaw(v, decimals));
}

/**
 * The effect-size column of a fit's table when its estimate is not already
 * one: r (association by least squares or M-estimation) or Cohen's d (one
 * sample, two groups); null otherwise.
 */
export function effectSizeHeader(ctx: SentenceContext): TextRun[] | null {
  if (estimateIsBounded(ctx)) return null;
  if (ctx.kind === "association") return merged([...correlationSymbol(ctx), plain(" [95% CI]")]);
  if (ctx.kind === "one-sample" || ctx.kind === "two-group")
    return [italic("d"), plain(" [95% CI]")];
  return null;
}

/** A region's cell in the effect-size column: ".35 [.10, .56]", "0.84 [0.21, 1.46]"; null without a value. */
export function effectSizeCell(region: RegionResult, ctx: SentenceContext): string | null {
  if (ctx.kind === "association")
    return finite(region.r)
      ? withInterval(region.r, region.rCiLow, region.rCiHigh, (v) => formatBounded(v))
      : null;
  const d = effectOf(region, "cohensD");
  if (!d) return null;
  return d.ci ? withInterval(d.value, d.ci[0], d.ci[1], (v) => formatStat(v)) : formatStat(d.value);
}

// ---------------------------------------------------------------- media

/** Text without marks (CSV, clipboard): subscripts joined with "_" ("p_adj", "r_s"), superscripts as they are ("T+"). */
export function runsPlain(runs: readonly TextRun[]): string {
  return runs.map((r) => (r.script === "sub" ? `_${r.text}` : r.text)).join("");
}

/** Inline marks of Markdown escaped: \ ` * _ | ~, and `<` where it could open an HTML tag ("p < .001" stays). */
function escapeInline(text: string): string {
  return text.replace(/[\\`*_|~]|<(?=[A-Za-z/!?])/g, (c) => `\\${c}`);
}

/** Text from outside (a region name) for a Markdown cell: inline marks, brackets, and `#` or `>` at the start escaped. */
export function escapeMarkdown(text: string): string {
  return escapeInline(text)
    .replace(/[[\]]/g, (c) => `\\${c}`)
    .replace(/^([#>])/, "\\$1");
}

/** Markdown: `*t*`, `<sub>adj</sub>`, `<sup>+</sup>` (sub- and superscripts as HTML, which common Markdown renderers pass). */
export function runsMarkdown(runs: readonly TextRun[]): string {
  return runs
    .map((r) => {
      const text = escapeInline(r.text);
      const marked = r.italic ? `*${text}*` : text;
      return r.script === "sub"
        ? `<sub>${marked}</sub>`
        : r.script === "super"
          ? `<sup>${marked}</sup>`
          : marked;
    })
    .join("");
}

const LATEX_SPECIAL: Record<string, string> = {
  "&": "\\&",
  "%": "\\%",
  $: "\\$",
  "#": "\\#",
  _: "\\_",
  "{": "\\{",
  "}": "\\}",
  "~": "\\textasciitilde{}",
  "^": "\\textasciicircum{}",
  "\\": "\\textbackslash{}",
  [MINUS]: "$-$",
  "–": "--",
  "—": "---",
  τ: "$\\tau$",
  "²": "\\textsuperscript{2}",
  "×": "$\\times$",
  Σ: "$\\Sigma$",
  "“": "``",
  "”": "''",
  "’": "'",
  "≤": "$\\le$",
  "≥": "$\\ge$",
};

/**
 * Text for LaTeX: & % $ # _ { } ~ ^ \ escaped, the minus sign as `$-$`, dashes as `--`/`---`,
 * curly quotes as `` and '', and the other symbols the engine's method words use (τ, ², ×, Σ, ≤, ≥)
 * in math mode, so the file compiles with pdfLaTeX's default fonts.
 */
export function escapeLatex(text: string): string {
  return text.replace(/[&%$#_{}~^\\\u2212–—τ²×Σ“”’≤≥]/g, (c) => LATEX_SPECIAL[c] ?? c);
}

/** LaTeX: `\textit{t}`, `\textsubscript{adj}`, `\textsuperscript{+}`, text escaped. */
export function runsLatex(runs: readonly TextRun[]): string {
  return runs
    .map((r) => {
      const text = escapeLatex(r.text);
      const marked = r.italic ? `\\textit{${text}}` : text;
      return r.script === "sub"
        ? `\\textsubscript{${marked}}`
        : r.script === "super"
          ? `\\textsuperscript{${marked}}`
          : marked;
    })
    .join("");
}
