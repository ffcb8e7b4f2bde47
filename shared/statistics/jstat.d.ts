// The part of jStat (https://github.com/jstat/jstat) that shared/statistics uses; the package ships no types.
declare module 'jstat' {
  interface Distribution2 {
    cdf(x: number, a: number, b: number): number;
    inv(p: number, a: number, b: number): number;
    pdf(x: number, a: number, b: number): number;
  }
  interface Distribution1 {
    cdf(x: number, a: number): number;
    inv(p: number, a: number): number;
  }
  const jStat: {
    normal: Distribution2;
    chisquare: Distribution1;
    studentt: Distribution1;
    centralF: Distribution2;
  };
  export default jStat;
}
