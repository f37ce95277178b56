// Minimal typings for the parts of jstat used as an independent reference in tests.
declare module 'jstat' {
  interface JStatStatic {
    normal: {
      cdf(x: number, mean: number, std: number): number
      inv(p: number, mean: number, std: number): number
    }
    studentt: {
      cdf(x: number, dof: number): number
      inv(p: number, dof: number): number
    }
    ibeta(x: number, a: number, b: number): number
    gammaln(x: number): number
  }
  const jStat: JStatStatic
  export default jStat
}
