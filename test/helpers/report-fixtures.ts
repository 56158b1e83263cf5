/**
 * FABRICATED TEST FIXTURES, NOT DATA. Small fit and rank JSON documents in the shapes of the fit
 * and rank issues, with curves from a closed-form damped sine (one made-up "shell" per term) and
 * seeded noise, invented only to exercise the report. No number here comes from a measurement or
 * from shellrank's own fits.
 */

/** Seeded uniform random numbers (mulberry32; T. Ettinger's public-domain generator). */
function random(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A made-up shell term: n/(k r^2) exp(-2 k^2 s2) sin(2 k r + 0.3). */
function term(k: number, n: number, r: number, s2: number): number {
  return k === 0 ? 0 : (n / (k * r * r)) * Math.exp(-2 * k * k * s2) * Math.sin(2 * k * r + 0.3);
}

const K = Array.from({ length: 321 }, (_, i) => Math.round(i * 0.05 * 1e6) / 1e6); // 0 .. 16 step 0.05

/** A fabricated fit JSON with curves; `shift` moves the first shell, making a worse model. */
export function fabricatedFit(name: string, shift: number, options: { seed?: number; noise?: number } = {}) {
  const rnd = random(options.seed ?? 7);
  const noise = options.noise ?? 0.002;
  const data = K.map((k) => term(k, 4, 1.95, 0.004) + term(k, 12, 3.1, 0.008) + (k > 0 ? noise * (rnd() - 0.5) : 0));
  const s1 = K.map((k) => term(k, 4, 1.95 + shift, 0.004));
  const s2 = K.map((k) => term(k, 12, 3.1 + shift, 0.008));
  const model = K.map((_, i) => s1[i] + s2[i]);
  const r = 0.01 + Math.abs(shift) * 0.6;
  return {
    name,
    file: `${name}.xyz`,
    stats: { rFactor: r, chiSquare: 800 * r, reducedChiSquare: 60 * r, nIndependent: 15.2, nVaried: 5, aic: 10 + 200 * r, bic: 14 + 200 * r },
    params: {
      s0sq: { value: 0.9, error: 0, state: 'fixed' },
      e0: { value: 2.31 + shift, error: 0.74, state: 'free' },
    },
    shells: [
      { species: 'O', n: 4, r: { value: 1.9512 + shift, error: 0.0123 }, msrd: { value: 0.00412, error: 0.00081 }, label: 'O 1' },
      { species: 'Zn', n: { value: 12, error: null, state: 'fixed' }, r: { value: 3.1049 + shift, error: 0.0361 }, msrd: { value: 0.0083, error: 0.0021 }, label: 'Zn 2' },
    ],
    correlations: [{ a: 'e0', b: 'r.O 1', value: 0.83 }, { a: 's0sq', b: 'msrd.O 1', value: 0.12 }],
    status: { converged: true, iterations: 12, reason: 'relative change below tolerance' },
    warnings: shift > 0.05 ? ['msrd of shell Zn 2 is at its upper bound'] : [],
    curves: {
      kWeighting: 2,
      k: K,
      data,
      model,
      window: { shape: 'hann', min: 3, max: 14, taper: 1 },
      rRange: [1, 3.4],
      shells: [{ label: 'O 1', chi: s1 }, { label: 'Zn 2', chi: s2 }],
    },
    settings: { fitIn: 'R', kRange: [3, 14], rRange: [1, 3.4], kWeighting: 2 },
    provenance: { tool: 'shellrank', version: '0.0.0-fixture', settings: { fabricated: true }, inputs: [{ role: 'data', file: 'fabricated.xdi', sha256: '0'.repeat(64) }], id: 'fixture' },
  };
}

/** A fabricated rank JSON of `names` (first is best); candidate i gets a first-shell shift of 0.04 i. */
export function fabricatedRank(names: string[] = ['tetrahedral site', 'octahedral site', 'metal cluster', 'interstitial']) {
  const verdicts = ['best', 'not distinguishable from the best', 'worse at 95 %', 'rejected'];
  const candidates = names.map((name, i) => {
    const fit = fabricatedFit(name, 0.04 * i, { seed: 7 });
    return {
      name,
      file: `structures/${name}.xyz`,
      rank: i + 1,
      verdict: verdicts[Math.min(i, verdicts.length - 1)],
      stats: fit.stats,
      significance: i === 0 ? undefined : { test: 'Hamilton R-ratio', statistic: 1 + i * 0.2, pValue: [0.31, 0.012, 0.0001][Math.min(i - 1, 2)] },
      fit,
    };
  });
  return {
    candidates,
    settings: { kRange: [3, 14], rRange: [1, 3.4], kWeighting: 2, fitIn: 'R', significanceLevel: 0.95 },
    provenance: { tool: 'shellrank', version: '0.0.0-fixture', settings: { fabricated: true }, inputs: [{ role: 'data', file: 'fabricated.xdi', sha256: 'f'.repeat(64) }], id: 'fixture-rank' },
    warnings: ['fabricated test fixture, not data'],
  };
}
