import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, readdirSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { cli, cliProcess, REPO } from './helpers/cli';

const tmp = () => mkdtempSync(join(tmpdir(), 'shellrank-cli-'));

// fcc Cu, a = 3.6149 Å (from memory, Wyckoff, Crystal Structures vol. 1), as a P1 CIF written by hand
const cuCif = `data_Cu
_cell_length_a 3.6149(2)
_cell_length_b 3.6149
_cell_length_c 3.6149
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
_symmetry_space_group_name_H-M 'P 1'
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
Cu1 Cu 0 0 0
Cu2 Cu 0 0.5 0.5
Cu3 Cu 0.5 0 0.5
Cu4 Cu 0.5 0.5 0
`;

describe('shellrank shells', () => {
  it('prints the JSON interface of issue 2 for fcc Cu: 12 Cu at 2.5561 Å first, sorted by r', async () => {
    const dir = tmp();
    const file = join(dir, 'cu.cif');
    writeFileSync(file, cuCif);
    const run = await cli(['shells', file, '--absorber', 'Cu', '--radius', '5.2', '--json']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.absorber).toBe('Cu');
    expect(doc.sites).toBe(4);
    expect(doc.shells.map((s: { n: number }) => s.n)).toEqual([12, 6, 24, 12]);
    expect(doc.shells[0].species).toBe('Cu');
    expect(doc.shells[0].r).toBeCloseTo(2.5561, 4);
    for (let i = 1; i < doc.shells.length; i++) expect(doc.shells[i].r).toBeGreaterThan(doc.shells[i - 1].r);
    expect(doc.provenance.inputs[0].sha256).toMatch(/^[0-9a-f]{64}$/);
  });
  it('writes a table to --out atomically and refuses to overwrite the input', async () => {
    const dir = tmp();
    const file = join(dir, 'cu.cif');
    writeFileSync(file, cuCif);
    const ok = await cli(['shells', file, '--absorber', 'Cu', '--out', join(dir, 'shells.txt')]);
    expect(ok.code).toBe(0);
    expect(readFileSync(join(dir, 'shells.txt'), 'utf8')).toContain('Cu.1');
    const bad = await cli(['shells', file, '--absorber', 'Cu', '--out', file]);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/refusing to overwrite an input file/);
    expect(readFileSync(file, 'utf8')).toBe(cuCif);
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
});

describe('shellrank simulate', () => {
  it('writes k, chi(k) and |chi(R)| as CSV, with the first |chi(R)| peak below the first-shell distance (phase shift; common practice, no source)', async () => {
    const dir = tmp();
    const file = join(dir, 'cu.cif');
    writeFileSync(file, cuCif);
    const run = await cli(['simulate', file, '--absorber', 'Cu', '--debye-temp', '315', '--temp', '300', '--rmax', '3', '--out', join(dir, 'sim.csv')]);
    expect(run.code).toBe(0);
    const lines = readFileSync(join(dir, 'sim.csv'), 'utf8').trim().split('\n');
    expect(lines[1]).toBe('k,chi,r,chiRMagnitude');
    const rows = lines.slice(2).map((l) => l.split(',').map(Number));
    const rPeak = rows.filter((r) => Number.isFinite(r[2]) && r[2] > 1).reduce((a, b) => (b[3] > a[3] ? b : a));
    expect(rPeak[2]).toBeLessThan(2.5561);
    expect(rPeak[2]).toBeGreaterThan(1.8);
  });
  it('uses the correlated Debye sigma^2 in JSON output (0.008-0.009 Å^2 for Cu at 295 K, theta_D = 315 K; issue 2)', async () => {
    const dir = tmp();
    const file = join(dir, 'cu.cif');
    writeFileSync(file, cuCif);
    const run = await cli(['simulate', file, '--absorber', 'Cu', '--debye-temp', '315', '--temp', '295', '--json', '--rmax', '3', '--provider', 'parametric']);
    expect(run.code).toBe(0);
    const doc = JSON.parse(run.stdout);
    expect(doc.paths[0].msrd).toBeGreaterThan(0.008);
    expect(doc.paths[0].msrd).toBeLessThan(0.009);
    expect(doc.approximate).toBe(true);
    expect(doc.k.length).toBe(doc.chi.length);
  });
  it('rejects conflicting disorder options with a one-line error and exit 2', async () => {
    const run = await cli(['simulate', join(REPO, 'structures/ni-metal-fcc.xyz'), '--absorber', '#0', '--msrd', '0.003', '--debye-temp', '300']);
    expect(run.code).toBe(2);
    expect(run.stderr.trim().split('\n')).toHaveLength(1);
    expect(run.stderr).toMatch(/only one of --msrd/);
  });
});

describe('errors from the real binary (end to end)', () => {
  it('names the file and line of a malformed XYZ, exits 2, prints no stack trace and writes nothing', () => {
    const dir = tmp();
    const file = join(dir, 'bad.xyz');
    writeFileSync(file, '2\ncomment\nCu 0 0 0\nCu 0 0 banana\n');
    const out = join(dir, 'out.json');
    const run = cliProcess(['shells', file, '--absorber', 'Cu', '--json', '--out', out]);
    expect(run.code).toBe(2);
    expect(run.stderr).toContain(`${file}:4`);
    expect(run.stderr).not.toMatch(/\n\s+at /);
    expect(existsSync(out)).toBe(false);
  });
  it('names a missing file', () => {
    const run = cliProcess(['shells', '/nonexistent/x.xyz', '--absorber', 'Cu']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/\/nonexistent\/x.xyz: no such file/);
  });
  it('shows the stack with --debug', () => {
    const run = cliProcess(['--debug', 'shells', '/nonexistent/x.xyz', '--absorber', 'Cu']);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/\n\s+at /);
  });
});
