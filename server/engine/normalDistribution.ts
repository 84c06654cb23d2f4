/**
 * The standard normal distribution and the chi-square(1) tail, accurate to about 1e-15,
 * for parametric VaR/ES and the Kupiec test. Pure functions, no I/O.
 *
 * erfc: for 0 ≤ x < 1.2 the positive-term series erf(x) = (2/√π) e^{−x²} Σₙ 2ⁿ x^{2n+1} / (1·3·…·(2n+1))
 * (Abramowitz & Stegun 1964, eq. 7.1.6); for x ≥ 1.2 (where 1 − erf would lose relative accuracy) the continued fraction
 * erfc(x) = (e^{−x²}/√π) · 1/(x + ½/(x + 1/(x + (3/2)/(x + …)))) (Abramowitz & Stegun 1964, eq. 7.1.14),
 * evaluated by the modified Lentz method (Lentz 1976; Thompson & Barnett 1986).
 */

const SQRT_PI = Math.sqrt(Math.PI);
const SQRT2 = Math.SQRT2;
const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);

/** Exact standard normal quantile at 0.95, Φ⁻¹(0.95) (rounded in the trade to 1.645). */
export const NORMAL_QUANTILE_95 = 1.6448536269514722;
/** Exact standard normal quantile at 0.99, Φ⁻¹(0.99) (rounded in the trade to 2.326). */
export const NORMAL_QUANTILE_99 = 2.3263478740408408;

function erfSeries(x: number): number {
  // A&S 7.1.6: all terms positive, so no cancellation.
  const x2 = x * x;
  let term = x;
  let sum = x;
  for (let n = 1; n < 200; n++) {
    term *= (2 * x2) / (2 * n + 1);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return ((2 / SQRT_PI) * Math.exp(-x2)) * sum;
}

function erfcContinuedFraction(x: number): number {
  // A&S 7.1.14 with partial numerators aₙ = n/2 and denominators x; modified Lentz.
  const tiny = 1e-300;
  let f = x;
  let c = x;
  let d = 0;
  for (let n = 1; n < 500; n++) {
    const a = n / 2;
    d = x + a * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = x + a / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = c * d;
    f *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return Math.exp(-x * x) / (SQRT_PI * f);
}

/** Complementary error function erfc(x) = 1 − erf(x). */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0) return 2 - erfc(-x);
  if (x < 1.2) return 1 - erfSeries(x);
  if (x > 27) return 0;
  return erfcContinuedFraction(x);
}

/** Error function erf(x). */
export function erf(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x < 0) return -erf(-x);
  if (x < 1.2) return erfSeries(x);
  return 1 - erfc(x);
}

/** Standard normal density φ(x). */
export function normalDensity(x: number): number {
  return INV_SQRT_2PI * Math.exp(-0.5 * x * x);
}

/** Standard normal distribution function Φ(x) = ½ erfc(−x/√2). */
export function normalCdf(x: number): number {
  return 0.5 * erfc(-x / SQRT2);
}

/**
 * Standard normal quantile Φ⁻¹(p): starting value from Abramowitz & Stegun (1964) eq. 26.2.23
 * (error < 4.5e-4), then Halley steps on Φ(x) − p, working in the smaller tail for accuracy.
 */
export function normalQuantile(p: number): number {
  if (!(p > 0 && p < 1)) {
    if (p === 0) return -Infinity;
    if (p === 1) return Infinity;
    throw new RangeError(`normalQuantile: probability must lie in (0, 1), got ${p}`);
  }
  if (p > 0.5) return -normalQuantile(1 - p);
  if (p === 0.5) return 0;
  // Lower tail: x < 0.
  const t = Math.sqrt(-2 * Math.log(p));
  let x = -(t - (2.515517 + 0.802853 * t + 0.010328 * t * t) / (1 + 1.432788 * t + 0.189269 * t * t + 0.001308 * t * t * t));
  for (let i = 0; i < 8; i++) {
    const e = (normalCdf(x) - p) / normalDensity(x);
    const step = e / (1 + (x * e) / 2); // Halley's method for Φ (Φ'' = −xφ)
    x -= step;
    if (Math.abs(step) <= 1e-16 * Math.max(1, Math.abs(x))) break;
  }
  return x;
}

/** Upper tail of the chi-square distribution with one degree of freedom: P(χ²₁ > s) = erfc(√(s/2)). */
export function chiSquare1Survival(s: number): number {
  if (Number.isNaN(s)) return NaN;
  if (s <= 0) return 1;
  return erfc(Math.sqrt(s / 2));
}
