// Minimal ambient types for the parts of jstat (https://github.com/jstat/jstat, 1.9.x)
// that reports/stats uses. jstat ships no types and there is no @types/jstat.
// jstat is a CommonJS/UMD bundle doing `module.exports = jStat`; under Node ESM (tsx)
// and under vitest the default import is that jStat object, hence `export default`.
// The property names (studentt, inv) are jstat's own and cannot be renamed.
declare module 'jstat' {
  type JStatLibrary = {
    studentt: {
      inv(p: number, degreesOfFreedom: number): number;
      cdf(x: number, degreesOfFreedom: number): number;
    };
    normal: {
      inv(p: number, mean: number, standardDeviation: number): number;
    };
  };
  const jStat: JStatLibrary;
  export default jStat;
}
