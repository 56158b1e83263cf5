/**
 * `--s0sq-from FIT.json` takes S0^2 from a fit of a reference compound; a fit that did not converge
 * gives no calibrated S0^2 and is refused. Data: the measured Cu foil of test/data (SOURCE.md),
 * scattering from the parametric provider (approximate; only the bookkeeping is checked here).
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { cli, REPO, TEST_DATA } from './helpers/cli';

const cuData = join(TEST_DATA, 'cu_metal_rt.xdi');
const cuP1 = join(REPO, 'test/fixtures/structures/cu-p1.cif');

describe('--s0sq-from and the status of the reference fit', () => {
  it('refuses a reference fit stopped before convergence and accepts a converged one', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-s0sq-from-'));
    const base = ['fit', cuData, cuP1, '--absorber', 'Cu', '--s0sq', 'free', '--r', '1.5:3', '--provider', 'parametric', '--json'];
    const stopped = join(dir, 'stopped.json');
    // the fit itself exits 3 (did not converge) but writes its result, which a user may then pass on
    expect((await cli([...base, '--max-iterations', '1', '--out', stopped])).code).toBe(3);
    expect(JSON.parse(readFileSync(stopped, 'utf8')).status.converged).toBe(false);
    const refused = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--s0sq-from', stopped, '--r', '1.5:3', '--provider', 'parametric']);
    expect(refused.code).toBe(2);
    expect(refused.stderr).toMatch(/stopped\.json: --s0sq-from: the reference fit did not converge/);
    const converged = join(dir, 'converged.json');
    expect((await cli([...base, '--out', converged])).code).toBe(0);
    const s0sq = JSON.parse(readFileSync(converged, 'utf8')).params.s0sq.value;
    const used = await cli(['fit', cuData, cuP1, '--absorber', 'Cu', '--s0sq-from', converged, '--r', '1.5:3', '--provider', 'parametric', '--json']);
    expect(used.code).toBe(0);
    expect(JSON.parse(used.stdout).params.s0sq).toMatchObject({ value: s0sq, state: 'fixed' });
  }, 120_000);
});
