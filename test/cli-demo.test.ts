import { describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { cliProcess } from './helpers/cli';

describe('shellrank demo (invented scenario, synthetic data)', () => {
  it('reduces, ranks and reports, and ranks the hidden mixture of scripts/make-demo-spectrum.ts first (issue 7)', () => {
    const dir = mkdtempSync(join(tmpdir(), 'shellrank-demo-'));
    const out = join(dir, 'demo');
    const run = cliProcess(['demo', '--out', out]);
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toContain(`report: ${join(out, 'report.html')}`);
    // the printed commands can be pasted into a shell: '#' would start a comment unquoted
    expect(run.stdout).toContain("--absorber '#0'");
    expect(run.stdout).not.toMatch(/ #0\b/);
    expect(existsSync(join(out, 'report.html'))).toBe(true);
    expect(existsSync(join(out, 'ranking.md'))).toBe(true);
    expect(existsSync(join(out, 'plots', 'fit-k.png'))).toBe(true);
    const ranking = JSON.parse(readFileSync(join(out, 'ranking', 'ranking.json'), 'utf8'));
    // the script's hidden answer: 70 % Ni on the octahedral spinel site + 30 % NiO
    const best = ranking.candidates[0];
    expect(best.verdict).toBe('best');
    expect(best.name).toMatch(/mixture of .*ni-spinel-octahedral\.xyz and .*nio-rocksalt\.xyz/);
    // the tetrahedral site, the other site hypothesis, is not supported by the data
    const tetrahedral = ranking.candidates.find((c: { name: string }) => c.name.endsWith('ni-spinel-tetrahedral.xyz'));
    expect(['worse at 95 %', 'rejected']).toContain(tetrahedral.verdict);
  }, 300_000);
});
