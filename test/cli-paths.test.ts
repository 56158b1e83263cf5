/**
 * `shellrank paths`: single- and multiple-scattering paths of fcc Cu with legs, effective
 * distance, degeneracy and importance, as a table and as JSON.
 *
 * Reference geometry of fcc (a = 3.6149 Å, from memory of Wyckoff, Crystal Structures, 2nd ed.
 * (1963), vol. 1; d = a / sqrt 2): shells of 12, 6, 24 and 12 atoms at d, a, d sqrt 3 and 2 d
 * (Kittel, Introduction to Solid State Physics, ch. 1, for the first two; the others from memory);
 * each nearest neighbour of the absorber has 4 nearest neighbours in common with it, so there
 * are 12 x 4 = 48 ordered first-shell triangles 0 -> i -> j -> 0 of half length 1.5 d, and one
 * collinear chain 0 -> i -> j -> i -> 0 (i at d, j at 2 d on one line) per first-shell atom (12),
 * half length 2 d (from memory).
 */
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { cli } from './helpers/cli';

const a = 3.6149;
const d = a / Math.SQRT2;

interface Row { id: string; legs: number; atoms: string[]; rEffective: number; degeneracy: number; legLengths: number[]; importance: number }

/** fcc Cu in P 1 with a = 3.6149 Å, the fixture shared with the CIF reader tests. */
function cuFile(): string {
  return fileURLToPath(new URL('./fixtures/structures/cu-p1.cif', import.meta.url));
}

describe('shellrank paths', () => {
  it('fcc Cu up to 4 legs: the shells, the 48 first-shell triangles and the collinear chain, importance above the cut', async () => {
    const file = cuFile();
    const run = await cli(['paths', file, '--absorber', 'Cu', '--rmax', '5.2', '--json']);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout) as { paths: Row[]; found: number; provenance: { settings: Record<string, unknown> } };
    const shells = doc.paths.filter((p) => p.legs === 2);
    expect(shells.map((p) => p.degeneracy)).toEqual([12, 6, 24, 12]);
    shells.forEach((p, i) => expect(p.rEffective).toBeCloseTo([d, a, d * Math.sqrt(3), 2 * d][i], 3));
    const triangle = doc.paths.find((p) => p.legs === 3 && p.legLengths.every((l) => Math.abs(l - d) < 0.01));
    expect(triangle?.degeneracy).toBe(48);
    expect(triangle?.rEffective).toBeCloseTo(1.5 * d, 3);
    const chain = doc.paths.find((p) => p.legs === 4 && p.legLengths.every((l) => Math.abs(l - d) < 0.01) && Math.abs(p.rEffective - 2 * d) < 0.01);
    expect(chain?.degeneracy).toBe(12);
    // every path: half its length is its effective distance; every kept path passes the cut
    for (const p of doc.paths) {
      expect(p.legLengths.reduce((s, x) => s + x, 0) / 2).toBeCloseTo(p.rEffective, 6);
      expect(p.legs).toBe(p.legLengths.length);
      expect(p.importance).toBeGreaterThanOrEqual(0.04);
    }
    expect(doc.paths.reduce((m, p) => Math.max(m, p.legs === 2 ? p.importance : 0), 0)).toBe(1);
    expect(doc.found).toBeGreaterThan(doc.paths.length);
    expect(doc.provenance.settings).toMatchObject({ maxLegs: 4, maxHalfLength: 5.2, minImportance: 0.04 });

    // a stricter cut keeps a subset; --max-legs 3 drops the 4-leg paths
    const strict = JSON.parse((await cli(['paths', file, '--absorber', 'Cu', '--rmax', '5.2', '--json', '--min-importance', '0.3'])).stdout) as { paths: Row[] };
    expect(strict.paths.length).toBeLessThan(doc.paths.length);
    for (const p of strict.paths) expect(doc.paths.map((q) => q.id)).toContain(p.id);
    const three = JSON.parse((await cli(['paths', file, '--absorber', 'Cu', '--rmax', '5.2', '--json', '--max-legs', '3'])).stdout) as { paths: Row[] };
    expect(three.paths.some((p) => p.legs === 4)).toBe(false);
    expect(three.paths.some((p) => p.legs === 3)).toBe(true);
  }, 120_000);

  it('table output; shells only with --max-legs 2; bad options are one-line input errors', async () => {
    const file = cuFile();
    const table = await cli(['paths', file, '--absorber', 'Cu', '--rmax', '4', '--max-legs', '2', '--provider', 'parametric']);
    expect(table.code).toBe(0);
    expect(table.stdout).toMatch(/path\s+legs\s+R_half \(Å\)\s+n\s+importance\s+atoms/);
    expect(table.stdout).toMatch(/Cu\.1\s+2\s+2\.556\d\s+12\s+1\.000/);
    expect(table.stdout).not.toMatch(/ms\d/);
    for (const [args, key] of [[['--max-legs', '5'], '--max-legs'], [['--rmax', '7'], '--rmax'], [['--provider', 'parametric'], '--provider']] as const) {
      const bad = await cli(['paths', file, '--absorber', 'Cu', ...args]);
      expect(bad.code).toBe(2);
      expect(bad.stdout).toBe('');
      expect(bad.stderr.trim().split('\n')).toHaveLength(1);
      expect(bad.stderr).toContain(key);
    }
  }, 120_000);
});
