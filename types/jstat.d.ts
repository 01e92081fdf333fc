declare module "jstat" {
  const jStatModule: { jStat: typeof jStat };
  export default jStatModule;
  export const jStat: {
    normal: { inv(p: number, mean: number, sd: number): number; cdf(x: number, mean: number, sd: number): number };
    chisquare: { inv(p: number, df: number): number; cdf(x: number, df: number): number };
    studentt: { inv(p: number, df: number): number; cdf(x: number, df: number): number };
  };
}
