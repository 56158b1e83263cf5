import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { cli, REPO, TEST_DATA } from './helpers/cli';

const tmp = () => mkdtempSync(join(tmpdir(), 'shellrank-fit-'));
const cuData = join(TEST_DATA, 'cu_metal_rt.xdi');
const cuP1 = join(REPO, 'test/fixtures/structures/cu-p1.cif');

describe('shellrank fit on the measured Cu foil', () => {
  it('writes the JSON of issue 5 with stats, params, shells, correlations, status and provenance', async () => {
    const dir = tmp();
    const out = join(dir, 'fit.json');
    const run = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--s0sq', 'free', '--r', '1.5:3', '--json', '--out', out, '--provider', 'parametric']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(readFileSync(out, 'utf8'));
    for (const key of ['rFactor', 'chiSquare', 'reducedChiSquare', 'nIndependent', 'nVaried', 'aic', 'bic']) expect(typeof doc.stats[key]).toBe('number');
    expect(doc.params.s0sq.state).toBe('free');
    expect(doc.params.e0.state).toBe('free');
    expect(doc.shells[0].species).toBe('Cu');
    expect(doc.shells[0].n).toBe(12);
    expect(typeof doc.shells[0].r.value).toBe('number');
    expect(typeof doc.shells[0].msrd.error).toBe('number');
    expect(doc.status.converged).toBe(true);
    expect(doc.provenance.inputs.map((i: { role: string }) => i.role)).toEqual(['data', 'structure', 'paths']);
    expect(doc.data.reducedHere).toBe(true);
    // the independent points of k 3-14, R 1.5-3: 2 * 11 * 1.5 / pi + 2 (Stern, Phys. Rev. B 48, 9825 (1993))
    expect(doc.stats.nIndependent).toBeCloseTo((2 * 11 * 1.5) / Math.PI + 2, 6);
  });
  it('fixes S0^2 from an earlier fit with --s0sq-from (calibration on a reference compound)', async () => {
    const dir = tmp();
    const ref = join(dir, 'ref.json');
    writeFileSync(ref, JSON.stringify({ params: { s0sq: { value: 0.83, error: 0.05, state: 'free' } } }));
    const run = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--s0sq-from', ref, '--r', '1.5:3', '--json', '--provider', 'parametric']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.params.s0sq).toMatchObject({ value: 0.83, state: 'fixed' });
  });
  it('refuses data shorter than the k range with a one-line error naming the file', async () => {
    const run = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--k', '3:25', '--provider', 'parametric']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/cu_metal_rt.xdi: --k: the data end at k = /);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
  });
  it('refuses a structure whose absorber is not the element of the data', async () => {
    const run = await cli(['fit', cuData, join(REPO, 'structures/ni-metal-fcc.xyz'), '--absorber', 'Ni', '--provider', 'parametric']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/the data are a Cu K spectrum but the model's absorber is Ni/);
  });
  it('writes an HTML report with --report', async () => {
    const dir = tmp();
    const run = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--r', '1.5:3', '--report', join(dir, 'rep'), '--provider', 'parametric']);
    expect(run.code).toBe(0);
    const html = readFileSync(join(dir, 'rep', 'report.html'), 'utf8');
    expect(html).toContain('<svg');
    expect(html).not.toMatch(/https?:\/\//);
  });
});

describe('shellrank fit on the demo data', () => {
  it('ends with exit 3 and a clear message when the fit cannot converge, with no NaN in the JSON', async () => {
    const dir = tmp();
    const out = join(dir, 'fit.json');
    const run = await cli(['fit', join(REPO, 'structures/demo-data/ni-spinel-sample.xdi'), join(REPO, 'structures/nio-rocksalt.xyz'), '--absorber', '#0',
      '--json', '--out', out, '--provider', 'parametric', '--max-iterations', '1']);
    expect(run.code).toBe(3);
    expect(run.stderr).toMatch(/did not converge/);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
    const text = readFileSync(out, 'utf8');
    expect(text).not.toMatch(/NaN/);
    expect(JSON.parse(text).status.converged).toBe(false);
  });
});
