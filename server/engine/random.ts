/**
 * Seeded pseudo-random numbers for tests, benchmarks, demo data and Monte Carlo.
 *
 * Uniforms: xoshiro128** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number generators"),
 * seeded through splitmix32 so that any 32-bit integer seed gives a well-mixed state.
 * Doubles take 53 random bits from two 32-bit outputs, so values lie in [0, 1) on the 2^-53 grid.
 * Normals: Marsaglia & Bray (1964) polar form of the Box–Muller transform, caching the spare variate.
 * Student-t: Z / sqrt(χ²_ν / ν) with χ²_ν from Marsaglia & Tsang (2000) gamma sampling.
 * Everything is deterministic for a given seed on every platform (only 32-bit integer arithmetic and IEEE doubles).
 */

export interface Random {
  /** Uniform in [0, 1). */
  uniform(): number;
  /** Standard normal N(0, 1). */
  normal(): number;
  /** Student-t with ν degrees of freedom, scaled to unit variance when ν > 2 (so it is a fat-tailed drop-in for normal()). */
  studentT(degreesOfFreedom: number): number;
  /** Gamma(shape, 1). */
  gamma(shape: number): number;
  /** Integer uniform in [0, n). */
  integer(n: number): number;
  /** Fills an array with standard normals. */
  fillNormal(target: Float64Array): Float64Array;
}

function splitmix32(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x9e3779b9) >>> 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
    return (z ^ (z >>> 16)) >>> 0;
  };
}

/** Creates a seeded generator. The same seed always gives the same sequence. */
export function createRandom(seed: number): Random {
  if (!Number.isFinite(seed)) throw new Error(`random seed must be a finite number, got ${seed}`);
  const mix = splitmix32(Math.floor(seed) >>> 0);
  let s0 = mix();
  let s1 = mix();
  let s2 = mix();
  let s3 = mix();
  if ((s0 | s1 | s2 | s3) === 0) s0 = 1; // the all-zero state is a fixed point

  // xoshiro128** next()
  const nextUint32 = (): number => {
    const result = Math.imul(rotl(Math.imul(s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (s1 << 9) >>> 0;
    s2 ^= s0;
    s3 ^= s1;
    s1 ^= s2;
    s0 ^= s3;
    s2 ^= t;
    s3 = rotl(s3 >>> 0, 11);
    s0 >>>= 0;
    s1 >>>= 0;
    s2 >>>= 0;
    return result;
  };

  const uniform = (): number => {
    const high = nextUint32() >>> 5; // 27 bits
    const low = nextUint32() >>> 6; // 26 bits
    return (high * 67108864 + low) / 9007199254740992; // (high·2^26 + low) / 2^53
  };

  let spare = NaN;
  const normal = (): number => {
    if (!Number.isNaN(spare)) {
      const value = spare;
      spare = NaN;
      return value;
    }
    // Marsaglia & Bray (1964) polar method.
    let u: number;
    let v: number;
    let s: number;
    do {
      u = 2 * uniform() - 1;
      v = 2 * uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const factor = Math.sqrt((-2 * Math.log(s)) / s);
    spare = v * factor;
    return u * factor;
  };

  const gamma = (shape: number): number => {
    if (!(shape > 0)) throw new Error(`gamma shape must be positive, got ${shape}`);
    if (shape < 1) {
      // Boost: Gamma(a) = Gamma(a + 1) · U^(1/a) (Marsaglia & Tsang 2000, section 6).
      return gamma(shape + 1) * Math.pow(uniform() || Number.MIN_VALUE, 1 / shape);
    }
    // Marsaglia & Tsang (2000), "A simple method for generating gamma variables".
    const d = shape - 1 / 3;
    const c = 1 / Math.sqrt(9 * d);
    for (;;) {
      let x: number;
      let v: number;
      do {
        x = normal();
        v = 1 + c * x;
      } while (v <= 0);
      v = v * v * v;
      const u = uniform();
      if (u < 1 - 0.0331 * x * x * x * x) return d * v;
      if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
    }
  };

  const studentT = (degreesOfFreedom: number): number => {
    if (!(degreesOfFreedom > 0)) throw new Error(`degrees of freedom must be positive, got ${degreesOfFreedom}`);
    const z = normal();
    const chiSquare = 2 * gamma(degreesOfFreedom / 2);
    const t = z / Math.sqrt(chiSquare / degreesOfFreedom);
    // Var(t_ν) = ν/(ν−2): rescale to unit variance when it exists.
    return degreesOfFreedom > 2 ? t * Math.sqrt((degreesOfFreedom - 2) / degreesOfFreedom) : t;
  };

  return {
    uniform,
    normal,
    studentT,
    gamma,
    integer: (n: number) => Math.floor(uniform() * n),
    fillNormal(target: Float64Array) {
      for (let i = 0; i < target.length; i++) target[i] = normal();
      return target;
    },
  };
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
