import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { readStructureFile, readStructureText } from '../src/read/structure/index';
import { writeCif } from '../src/read/structure/cif';
import { shellsOfStructure } from '../src/paths/index';
import type { PathSet } from '../src/paths/pathset';

const fixture = (name: string) => fileURLToPath(new URL(`./fixtures/structures/${name}`, import.meta.url));

function summary(set: PathSet) {
  return set.paths.map((p) => ({ species: p.scatterer, r: Number(p.r.toFixed(5)), n: Number(p.degeneracy.toFixed(6)) }));
}

describe('a CIF with symmetry operators and the same structure in P1 give the same shells (issue 2 acceptance)', () => {
  it('fcc Cu: Fm-3m operators (cu-fm3m.cif) and the hand-written P1 cell (cu-p1.cif), a = 3.6149 Å', () => {
    const sym = readStructureFile(fixture('cu-fm3m.cif'))[0];
    const p1 = readStructureFile(fixture('cu-p1.cif'))[0];
    const a = shellsOfStructure(sym, { absorber: { element: 'Cu' }, radius: 6 });
    const b = shellsOfStructure(p1, { absorber: { element: 'Cu' }, radius: 6 });
    expect(summary(a)).toEqual(summary(b));
    expect(a.paths[0].degeneracy).toBeCloseTo(12, 10);
  });
  it('corundum Al2O3: R-3c operators and our own P1 rewrite, for both absorbers', () => {
    const sym = readStructureFile(fixture('corundum-r3c.cif'))[0];
    const p1 = readStructureText(writeCif(sym), 'corundum-p1.cif')[0];
    for (const element of ['Al', 'O']) {
      const a = shellsOfStructure(sym, { absorber: { element }, radius: 5 });
      const b = shellsOfStructure(p1, { absorber: { element }, radius: 5 });
      expect(summary(a)).toEqual(summary(b));
    }
    // Al is 6-coordinated by O in corundum: 3 + 3 at about 1.86 and 1.97 Å (from memory, Lewis et al., Acta Cryst. A38, 733 (1982))
    const al = shellsOfStructure(sym, { absorber: { element: 'Al' }, radius: 2.1 });
    expect(al.paths.map((p) => p.degeneracy)).toEqual([3, 3]);
    expect(Math.abs(al.paths[0].r - 1.86)).toBeLessThan(0.01); // 1.8547 with the fixture's coordinates
    expect(Math.abs(al.paths[1].r - 1.97)).toBeLessThan(0.01);
  });
});
