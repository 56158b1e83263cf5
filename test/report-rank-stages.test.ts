/**
 * Reports of rankings in which most candidates were only pre-screened (more than --refine-top):
 * the rank stage writes every candidate's shells in the shape the report reads, shell tables name
 * shells by species, distance and degeneracy, a mixture names its parts and all its files, and an
 * approximate scattering provider is warned about in text and JSON.
 *
 * Data: the measured ZnSe spectrum of test/data (see test/data/SOURCE.md) and an invented
 * 25-frame cluster file with synthetic chi(k). Scattering from the parametric provider
 * (approximate) keeps the tests fast; its warning is part of what is checked.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeCif } from '../src/read/structure/index';
import { reportModelFrom } from '../src/report/types';
import { chiToJson } from '../src/reduce/index';
import { latticeFromParameters, makeStructure } from '../src/structure/structure';
import { cli, REPO } from './helpers/cli';
import { clusterOf, syntheticChi, xyzFrame, type Shell } from './helpers/rank-synthetic';

const ZNSE_DATA = join(REPO, 'test', 'data', 'zn_znse_rt.xdi');

/** Zinc-blende ZnSe from its lattice constant a = 5.6676 Å (from memory; as in test/helpers/crystals.ts). */
function zincBlendeZnSe(a: number) {
  const fcc = [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]];
  return makeStructure({
    species: [...fcc.map(() => 'Zn'), ...fcc.map(() => 'Se')],
    positions: [...fcc.flatMap(([u, v, w]) => [u * a, v * a, w * a]), ...fcc.flatMap(([u, v, w]) => [(u + 0.25) * a, (v + 0.25) * a, (w + 0.25) * a])],
    lattice: latticeFromParameters(a, a, a, 90, 90, 90),
    info: { title: 'ZnSe zinc blende' },
  });
}

describe('report of a screen with pre-screened candidates (measured ZnSe)', () => {
  let dir: string;
  const a = 5.6676;
  // Zn-Se nearest neighbours of zinc blende at a sqrt(3) / 4 (geometry of the structure; 2.454 Å)
  const znSe = (a * Math.sqrt(3)) / 4;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-report-screen-'));
    writeFileSync(join(dir, 'znse.cif'), writeCif(zincBlendeZnSe(a)));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('writes every candidate\'s shells as a list, the report reads it, and the approximate provider is warned about', async () => {
    const run = await cli(['screen', ZNSE_DATA, 'znse.cif', '--absorber', 'Zn', '--vary', 'substitute:Se.1=S', '--vary', 'strain:-1..1/1',
      '--provider', 'parametric', '--refine-top', '2', '--k', '3:10', '--r', '1.5:2.8', '--workers', '0', '--out', 'run', '--quiet'], dir);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stderr).toMatch(/warning: scattering functions from the 'parametric' provider are approximate .* meant for tests/);
    const doc = JSON.parse(readFileSync(join(dir, 'run', 'ranking.json'), 'utf8'));
    expect(doc.warnings).toHaveLength(1);
    expect(doc.warnings[0]).toContain('not physical values');
    const stages = doc.candidates.map((c: { stage: string }) => c.stage);
    expect(stages.filter((s: string) => s === 'refine')).toHaveLength(2);
    expect(stages.filter((s: string) => s === 'prescreen').length).toBeGreaterThan(0);
    for (const c of doc.candidates) {
      expect(Array.isArray(c.fit.shells), c.name).toBe(true);
      expect(c.files).toEqual(['znse.cif']);
    }
    // the unchanged structure: one shell of 4 Se at the zinc-blende distance, fixed in the pre-screen
    const base = doc.candidates.find((c: { name: string }) => c.name === 'base');
    const se = base.fit.shells.find((s: { species: string }) => s.species === 'Se');
    expect(se.degeneracy).toBe(4);
    expect(se.r0).toBeCloseTo(znSe, 4);
    const prescreened = doc.candidates.find((c: { stage: string }) => c.stage === 'prescreen');
    for (const s of prescreened.fit.shells) {
      expect(s.r.value).toBeCloseTo(s.r0, 10);
      expect(s.r.state).toBe('fixed');
      expect(s.msrd.value).toBeGreaterThan(0);
    }

    const report = await cli(['report', 'run/ranking.json', '--out', 'rep', '--no-png'], dir);
    expect(report.code, report.stderr).toBe(0);
    const model = reportModelFrom(doc, 'ranking.json');
    expect(model.warnings).toEqual(doc.warnings);
    const view = model.candidates.find((c) => c.name === 'base')!;
    expect(view.shells.map((s) => s.label)).toContain(`Se ${znSe.toFixed(3)} Å (4)`);
    // one Se substituted by S splits the shell: 1 S and 3 Se at the same distance
    const split = model.candidates.find((c) => c.name === 'Se.1: 1 of 4 Se -> S')!;
    expect(split.shells.map((s) => s.label).sort()).toEqual([`S ${znSe.toFixed(3)} Å (1)`, `Se ${znSe.toFixed(3)} Å (3)`]);
    const html = readFileSync(join(dir, 'rep', 'report.html'), 'utf8');
    expect(html).toContain('scattering functions from the &#39;parametric&#39; provider are approximate');
  }, 120_000);
});

describe('report of a 25-frame ranking with a mixture', () => {
  let dir: string;
  // invented clusters: frame i has 6 O at 2.00 + 0.01 i Å, 12 Fe at 3.00 Å and three O shells at the
  // distances the issue quotes (3.317, 3.552 and 3.607 Å), which one msrd group covers
  const frames: Shell[][] = Array.from({ length: 25 }, (_, i) => [
    { species: 'O', n: 6, r: 2.0 + 0.01 * i }, { species: 'Fe', n: 12, r: 3.0 },
    { species: 'O', n: 2, r: 3.317 }, { species: 'O', n: 4, r: 3.552 }, { species: 'O', n: 2, r: 3.607 },
  ]);
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'shellrank-report-frames-'));
    writeFileSync(join(dir, 'frames.xyz'), frames.map((f, i) => xyzFrame(clusterOf(f), `frame ${i}`)).join(''));
    writeFileSync(join(dir, 'data.json'), chiToJson(syntheticChi(clusterOf(frames[3]), 7, 0.001)));
    return () => rmSync(dir, { recursive: true, force: true });
  });

  it('reports it, labels shells by species, distance and degeneracy, and names the parts and files of the mixture', async () => {
    const run = await cli(['rank', 'data.json', 'frames.xyz', '--absorber', '#0', '--mixture', 'frames.xyz#3,frames.xyz#20',
      '--provider', 'parametric', '--refine-top', '3', '--k', '3:10', '--r', '1.2:3.2', '--workers', '0', '--out', 'run', '--quiet'], dir);
    expect(run.code, run.stderr).toBe(0);
    const doc = JSON.parse(readFileSync(join(dir, 'run', 'ranking.json'), 'utf8'));
    expect(doc.candidates).toHaveLength(26);
    expect(doc.candidates.filter((c: { stage: string }) => c.stage === 'prescreen').length).toBe(23);
    const report = await cli(['report', 'run/ranking.json', '--out', 'rep', '--no-png'], dir);
    expect(report.code, report.stderr).toBe(0);

    const model = reportModelFrom(doc, 'ranking.json');
    const best = model.candidates.find((c) => c.verdict === 'best')!;
    const labels = best.shells.map((s) => s.label);
    expect(new Set(labels).size).toBe(labels.length);
    for (const [r, n] of [[3.317, 2], [3.552, 4], [3.607, 2]]) expect(labels.some((l) => l.startsWith('O ') && l.includes(`${r.toFixed(3)} Å (${n})`))).toBe(true);
    expect(labels.some((l) => l.startsWith('msrd_'))).toBe(false);

    const mixture = model.candidates.find((c) => c.components.length === 2)!;
    expect(mixture.files).toEqual(['frames.xyz#3', 'frames.xyz#20']);
    expect(mixture.components).toEqual(['frames#3', 'frames#20']);
    // every shell of the mixture says which part it belongs to
    for (const s of mixture.shells) expect(s.label).toMatch(/^frames#(3|20): O|^frames#(3|20): Fe/);
    expect(mixture.shells.filter((s) => s.label.startsWith('frames#20: O 2.200 Å (6)'))).toHaveLength(1);

    const csv = readFileSync(join(dir, 'rep', 'ranking.csv'), 'utf8');
    expect(csv).toContain('frames.xyz#3 + frames.xyz#20');
    const html = readFileSync(join(dir, 'rep', 'report.html'), 'utf8');
    expect(html).toContain('structures <code>frames.xyz#3</code> + <code>frames.xyz#20</code>');
    expect(html).toContain('frames#20: O 2.200 Å (6)');
  }, 120_000);
});
