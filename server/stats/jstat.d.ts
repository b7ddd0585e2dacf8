/**
 * Type declaration for the parts of jstat (1.9.x) the statistics engine uses.
 * jstat ships no types; it is a CommonJS module whose default import is the
 * `jStat` function object. Only what is declared here may be called.
 */
declare module "jstat" {
  interface ContinuousDistribution2 {
    pdf(x: number, a: number, b: number): number;
    cdf(x: number, a: number, b: number): number;
    inv(p: number, a: number, b: number): number;
  }
  interface ContinuousDistribution1 {
    pdf(x: number, a: number): number;
    cdf(x: number, a: number): number;
    inv(p: number, a: number): number;
  }
  interface JStatStatic {
    normal: ContinuousDistribution2;
    studentt: ContinuousDistribution1;
    centralF: ContinuousDistribution2;
    chisquare: ContinuousDistribution1;
    beta: ContinuousDistribution2;
    noncentralt: {
      pdf(x: number, dof: number, ncp: number): number;
      cdf(x: number, dof: number, ncp: number): number;
    };
    /** Regularized incomplete beta function I_x(a, b). */
    ibeta(x: number, a: number, b: number): number;
    /** Inverse of I_x(a, b) in x. */
    ibetainv(p: number, a: number, b: number): number;
    /** Lower regularized incomplete gamma P(a, x). */
    lowRegGamma(a: number, x: number): number;
    gammaln(x: number): number;
    gammafn(x: number): number;
    betaln(a: number, b: number): number;
    erf(x: number): number;
    erfc(x: number): number;
  }
  const jStat: JStatStatic;
  export default jStat;
}
