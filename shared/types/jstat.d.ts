// Minimal typing for the parts of jstat the engine uses (the package ships none).
declare module 'jstat' {
  interface Dist1 { inv(p: number, dof: number): number; cdf(x: number, dof: number): number }
  interface JStat {
    chisquare: Dist1
    studentt: Dist1
    centralF: { inv(p: number, df1: number, df2: number): number; cdf(x: number, df1: number, df2: number): number }
    normal: { inv(p: number, mean: number, sd: number): number; cdf(x: number, mean: number, sd: number): number }
    beta: { cdf(x: number, a: number, b: number): number }
  }
  const jStat: JStat
  export default jStat
}
