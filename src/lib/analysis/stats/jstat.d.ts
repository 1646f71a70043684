// jstat 1.9.6 ships no type declarations and package.json may not change (no @types/jstat), so the few
// functions the stats core calls are declared here.
declare module 'jstat' {
  interface JStatStatic {
    normal: {
      cdf(x: number, mean: number, sd: number): number;
      inv(p: number, mean: number, sd: number): number;
    };
    chisquare: { cdf(x: number, dof: number): number };
    studentt: { cdf(x: number, dof: number): number; inv(p: number, dof: number): number };
    gammaln(x: number): number;
  }
  const jstat: { jStat: JStatStatic };
  export default jstat;
}
