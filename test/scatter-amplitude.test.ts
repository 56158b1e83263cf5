/**
 * Curved-wave single-scattering amplitude: the addition theorem it rests on (checked pointwise with
 * independently computed j_l, h_l, Y_lm), the exact s-wave closed form F = f (1 + i/(kR))^2 that
 * follows from h_1(x) = -e^{ix}(x + i)/x^2 (A&S 10.1.11), and the plane-wave limit
 * F -> f(pi) = (1/k) sum (2l+1)(-1)^l e^{i delta_l} sin delta_l for large R (Lee and Pendry,
 * Phys. Rev. B 11, 2795 (1975); Rehr and Albers, Phys. Rev. B 41, 8139 (1990)).
 * The full short-R complex amplitude, phase included, is checked for every l' of the scatterer
 * against an oracle that uses no angular-momentum algebra: the outgoing wave h_l Y_lm of the
 * absorber projected numerically (Gauss-Legendre in cos theta) onto Y_l'm about the scatterer,
 * and the scattered wave h_l' Y_l'm projected back onto Y_lm about the absorber (each projection
 * divided by the regular radial function it multiplies), combined as rho_m = a b i t_l'.
 */
import { describe, expect, it } from 'vitest';
import { effectiveAmplitude, planeWaveBackscattering, translationCoefficients } from '../src/scatter/amplitude';
import { gaunt, sphericalHarmonic } from '../src/scatter/angular';
import { phaseShifts, spherePotentialFrom } from '../src/scatter/phase-shifts';
import { sphericalBesselJ, sphericalHankel } from '../src/scatter/spherical-bessel';
import { gaussLegendre as gaussLegendreRule } from '../src/numeric/quadrature';

/** Gauss-Legendre nodes and weights on [-1, 1] (src/numeric/quadrature.ts, checked in test/numeric-fourier.test.ts). */
function gaussLegendre(n: number): { x: Float64Array; w: Float64Array } {
  const { nodes, weights } = gaussLegendreRule(n);
  return { x: nodes, w: weights };
}

describe('addition theorem for outgoing spherical waves (Danos and Maximon 1965)', () => {
  it('h_l Y_lm(r + d) equals the two-centre sum to 1e-9 at a test point', () => {
    const k = 1.3;
    const d = [0.3, -0.4, 2.9];
    const rp = [0.2, 0.35, -0.15];
    const dLen = Math.hypot(d[0], d[1], d[2]);
    const dTh = Math.acos(d[2] / dLen);
    const dPh = Math.atan2(d[1], d[0]);
    const rLen = Math.hypot(rp[0], rp[1], rp[2]);
    const rTh = Math.acos(rp[2] / rLen);
    const rPh = Math.atan2(rp[1], rp[0]);
    const tot = [d[0] + rp[0], d[1] + rp[1], d[2] + rp[2]];
    const tLen = Math.hypot(tot[0], tot[1], tot[2]);
    for (const [l, m] of [[1, 0], [1, 1], [2, -1], [3, 2]]) {
      const h = sphericalHankel(l, k * tLen);
      const y = sphericalHarmonic(l, m, Math.acos(tot[2] / tLen), Math.atan2(tot[1], tot[0]));
      const lhs = [h.re[l] * y[0] - h.im[l] * y[1], h.re[l] * y[1] + h.im[l] * y[0]];
      let sr = 0;
      let si = 0;
      const L = 30;
      const jr = sphericalBesselJ(L, k * rLen);
      const hd = sphericalHankel(L + l, k * dLen);
      for (let l1 = 0; l1 <= L; l1++) {
        for (let m1 = -l1; m1 <= l1; m1++) {
          for (let l2 = Math.abs(l - l1); l2 <= l + l1; l2++) {
            const m2 = m - m1;
            if (Math.abs(m2) > l2) continue;
            // C(L; L1, L2) = ∫ Y_L Y*_L1 Y*_L2 = (-1)^(m1+m2) gaunt(l m, l1 -m1, l2 -m2)
            const c = ((m1 + m2) % 2 === 0 ? 1 : -1) * gaunt(l, m, l1, -m1, l2, -m2);
            if (c === 0) continue;
            const n = (((l1 + l2 - l) % 4) + 4) % 4;
            const ip = [[1, 0], [0, 1], [-1, 0], [0, -1]][n];
            const y1 = sphericalHarmonic(l1, m1, rTh, rPh);
            const y2 = sphericalHarmonic(l2, m2, dTh, dPh);
            const yy = [y1[0] * y2[0] - y1[1] * y2[1], y1[0] * y2[1] + y1[1] * y2[0]];
            const hv = [hd.re[l2], hd.im[l2]];
            const hyy = [hv[0] * yy[0] - hv[1] * yy[1], hv[0] * yy[1] + hv[1] * yy[0]];
            const v = 4 * Math.PI * c * jr[l1];
            sr += v * (ip[0] * hyy[0] - ip[1] * hyy[1]);
            si += v * (ip[0] * hyy[1] + ip[1] * hyy[0]);
          }
        }
      }
      expect(Math.abs(sr - lhs[0])).toBeLessThan(1e-9);
      expect(Math.abs(si - lhs[1])).toBeLessThan(1e-9);
    }
  });
});

describe('curved-wave amplitude', () => {
  it('pure s-wave scatterer, final l = 1: F / f = (1 + i/(kR))^2 to 1e-12', () => {
    const coef = translationCoefficients(1, 0);
    for (const [k, R] of [[0.8, 4], [3, 5]]) {
      const dr = [0.7];
      const di = [0];
      const [fr, fi] = effectiveAmplitude(coef, dr, di, 0, k, R);
      const [pr, pi] = planeWaveBackscattering(dr, di, 0, k);
      const x = k * R;
      // (1 + i/x)^2 = 1 - 1/x^2 + 2i/x
      const cr = 1 - 1 / (x * x);
      const ci = 2 / x;
      expect(fr).toBeCloseTo(pr * cr - pi * ci, 12);
      expect(fi).toBeCloseTo(pr * ci + pi * cr, 12);
    }
  });
  it('short R, every l\' = 0..7, final l = 0, 1, 2: F equals the direct angular projections of the two translations (complex, 1e-9 relative)', () => {
    const gauss = gaussLegendre(96);
    const theta = (l: number, m: number, c: number) => sphericalHarmonic(l, m, Math.acos(c), 0)[0];
    const hankel = (l: number, x: number): [number, number] => {
      const h = sphericalHankel(l, x);
      return [h.re[l], h.im[l]];
    };
    const delta: [number, number] = [0.4, 0.1];
    const [tr, ti] = [(Math.exp(-2 * delta[1]) * Math.sin(2 * delta[0])) / 2, -(Math.exp(-2 * delta[1]) * Math.cos(2 * delta[0]) - 1) / 2];
    for (const finalL of [1, 0, 2]) {
      for (const [k, R] of [[1.2, 4.8], [3, 4.8], [0.9, 3]]) {
        for (let lp = 0; lp <= 7; lp++) {
          const rho = 0.45 * R; // any radius below R: the expansions are exact there
          let sumR = 0;
          let sumI = 0;
          for (let m = -Math.min(finalL, lp); m <= Math.min(finalL, lp); m++) {
            let ar = 0;
            let ai = 0;
            let br = 0;
            let bi = 0;
            for (let q = 0; q < gauss.x.length; q++) {
              const c = gauss.x[q];
              // point rho (sin, 0, cos) about the scatterer at R z, seen from the absorber
              const d1 = Math.sqrt(R * R + rho * rho + 2 * R * rho * c);
              const [h1r, h1i] = hankel(finalL, k * d1);
              const f1 = 2 * Math.PI * gauss.w[q] * theta(lp, m, c) * theta(finalL, m, (R + rho * c) / d1);
              ar += f1 * h1r;
              ai += f1 * h1i;
              // point rho (sin, 0, cos) about the absorber, seen from the scatterer
              const d2 = Math.sqrt(R * R + rho * rho - 2 * R * rho * c);
              const [h2r, h2i] = hankel(lp, k * d2);
              const f2 = 2 * Math.PI * gauss.w[q] * theta(finalL, m, c) * theta(lp, m, (rho * c - R) / d2);
              br += f2 * h2r;
              bi += f2 * h2i;
            }
            const ja = sphericalBesselJ(lp, k * rho)[lp];
            const jb = sphericalBesselJ(finalL, k * rho)[finalL];
            const [pr, pi] = [(ar * br - ai * bi) / (ja * jb), (ar * bi + ai * br) / (ja * jb)];
            sumR += pr;
            sumI += pi;
          }
          // rho = (a b) i t, then f = (-1)^(l+1) k R^2 e^{-2ikR} rho / (i (2l+1)) (the module's normalisation,
          // fixed by the s-wave closed form and the plane-wave limit above)
          const [rr, ri] = [-sumR * ti - sumI * tr, sumR * tr - sumI * ti];
          const [er, ei] = [Math.cos(2 * k * R), -Math.sin(2 * k * R)];
          const [qr, qi] = [rr * er - ri * ei, rr * ei + ri * er];
          const scale = ((finalL % 2 === 0 ? -1 : 1) * k * R * R) / (2 * finalL + 1);
          const oracle = [scale * qi, -scale * qr];
          const dRe = new Float64Array(lp + 1);
          const dIm = new Float64Array(lp + 1);
          dRe[lp] = delta[0];
          dIm[lp] = delta[1];
          const got = effectiveAmplitude(translationCoefficients(finalL, lp), dRe, dIm, lp, k, R);
          expect(Math.hypot(got[0] - oracle[0], got[1] - oracle[1]), `l ${finalL} l' ${lp} k ${k} R ${R}`).toBeLessThan(1e-9 * Math.hypot(oracle[0], oracle[1]));
        }
      }
    }
  });
  const pot = spherePotentialFrom(2.4, (r) => [(-29 * Math.exp(-r / 0.5)) / r - 0.5, 0], 0.01);
  for (const finalL of [1, 2, 0]) {
    it(`|F(k)| is within 1 % of |f(pi)| at R = 50 Å and the complex difference falls as 1/R (final l = ${finalL})`, () => {
      const coef = translationCoefficients(finalL, 40);
      for (const kA of [3, 8, 14]) {
        const k = kA * 0.529177210903;
        const lmax = Math.ceil(k * 2.4) + 6;
        const s = phaseShifts(pot, k, lmax);
        const [pr, pi] = planeWaveBackscattering(s.re, s.im, lmax, k);
        const at = (RA: number) => effectiveAmplitude(coef, s.re, s.im, lmax, k, RA / 0.529177210903);
        const [fr, fi] = at(50);
        expect(Math.abs(Math.hypot(fr, fi) / Math.hypot(pr, pi) - 1)).toBeLessThan(0.01);
        // leading curved-wave term is O(1/(kR)): quadrupling R divides the difference by about 4
        const [gr, gi] = at(200);
        const ratio = Math.hypot(fr - pr, fi - pi) / Math.hypot(gr - pr, gi - pi);
        expect(ratio).toBeGreaterThan(3.6);
        expect(ratio).toBeLessThan(4.4);
      }
    });
  }
  it('at low k and short R the curved-wave amplitude is smaller than the plane-wave one, approaching it as R grows (Rehr and Albers 1990, their comparison of curved- and plane-wave amplitudes; from memory)', () => {
    const coef = translationCoefficients(1, 40);
    const k = 3 * 0.529177210903;
    const lmax = Math.ceil(k * 2.4) + 6;
    const s = phaseShifts(pot, k, lmax);
    const [pr, pi] = planeWaveBackscattering(s.re, s.im, lmax, k);
    let previous = 0;
    for (const RA of [2.5, 4, 8, 20]) {
      const [fr, fi] = effectiveAmplitude(coef, s.re, s.im, lmax, k, RA / 0.529177210903);
      const ratio = Math.hypot(fr, fi) / Math.hypot(pr, pi);
      expect(ratio).toBeLessThan(1);
      expect(ratio).toBeGreaterThan(previous);
      previous = ratio;
    }
  });
});
