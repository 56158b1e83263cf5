/**
 * Seeded pseudo-random numbers for multi-start fits and synthetic-data tests.
 *
 * Uniform generator: mulberry32, a 32-bit multiply-xorshift generator (T. Ettinger, public-domain
 * code, 2017; common practice, no paper), two outputs combined into one 53-bit double in [0, 1).
 * Gaussian deviates: the Box-Muller transform, Box and Muller, Ann. Math. Stat. 29, 610 (1958).
 * No global state: each generator is an object owning its state.
 */

/** A seeded stream of pseudo-random numbers. */
export interface RandomStream {
  /** Uniform double in [0, 1), 53 random bits. */
  uniform(): number;
  /** Standard normal deviate (mean 0, standard deviation 1). */
  normal(): number;
}

/**
 * A mulberry32 stream seeded by an integer (only the low 32 bits are used).
 * The same seed always gives the same sequence, on every platform.
 */
export function seededRandom(seed: number): RandomStream {
  let state = seed >>> 0;
  let spare = NaN;
  const next32 = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return (t ^ (t >>> 14)) >>> 0;
  };
  const uniform = (): number => {
    const high = next32() >>> 5; // 27 bits
    const low = next32() >>> 6; // 26 bits
    return (high * 67108864 + low) / 9007199254740992;
  };
  const normal = (): number => {
    if (!Number.isNaN(spare)) {
      const v = spare;
      spare = NaN;
      return v;
    }
    let u1 = 0;
    while (u1 === 0) u1 = uniform();
    const u2 = uniform();
    const radius = Math.sqrt(-2 * Math.log(u1));
    spare = radius * Math.sin(2 * Math.PI * u2);
    return radius * Math.cos(2 * Math.PI * u2);
  };
  return { uniform, normal };
}
