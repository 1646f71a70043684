import jstat from 'jstat';

/**
 * The jStat distribution functions the stats core uses, behind one import (jstat is a UMD/CommonJS
 * bundle, reached through its default export).
 *
 * @returns standard normal CDF and quantile, chi-square survival function, log-gamma, Student t CDF and quantile
 */
export function distributions() {
  const { jStat } = jstat;
  return {
    normalCdf: (z: number) => jStat.normal.cdf(z, 0, 1),
    normalQuantile: (p: number) => jStat.normal.inv(p, 0, 1),
    chiSquareSurvival: (x: number, dof: number) => 1 - jStat.chisquare.cdf(x, dof),
    logGamma: (x: number) => jStat.gammaln(x),
    studentTCdf: (x: number, dof: number) => jStat.studentt.cdf(x, dof),
    studentTQuantile: (p: number, dof: number) => jStat.studentt.inv(p, dof),
  };
}
