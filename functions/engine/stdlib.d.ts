// The stdlib packages ship their own typings under docs/types; these declarations only make the
// default-export shape explicit for the CommonJS interop used by ts-loader and ts-jest.
declare module "@stdlib/math-base-special-gammainc" {
  export default function gammainc(x: number, s: number, regularized?: boolean, upper?: boolean): number;
}
declare module "@stdlib/math-base-special-betainc" {
  export default function betainc(x: number, a: number, b: number, regularized?: boolean, upper?: boolean): number;
}
declare module "@stdlib/math-base-special-erfc" {
  export default function erfc(x: number): number;
}
declare module "@stdlib/stats-base-dists-t-quantile" {
  export default function quantile(p: number, v: number): number;
}
declare module "@stdlib/stats-base-dists-normal-quantile" {
  export default function quantile(p: number, mu: number, sigma: number): number;
}
declare module "@stdlib/stats-base-dists-chisquare-quantile" {
  export default function quantile(p: number, k: number): number;
}
declare module "@stdlib/stats-base-dists-f-quantile" {
  export default function quantile(p: number, d1: number, d2: number): number;
}
