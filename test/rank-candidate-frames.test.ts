/**
 * A candidate given as `file#frame` picks that frame of a multi-frame file; a frame past the end
 * is an error saying so (not "no such file"). Structures: invented two-frame XYZ.
 */
import { describe, it, expect } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { discoverCandidates } from '../src/rank/candidates';

describe('file#frame candidates', () => {
  const dir = mkdtempSync(join(tmpdir(), 'shellrank-frames-'));
  const file = join(dir, 'traj.xyz');
  writeFileSync(file, '2\nframe 0\nCu 0 0 0\nCu 2.55 0 0\n2\nframe 1\nCu 0 0 0\nCu 2.60 0 0\n');

  it('traj.xyz#1 is the second frame only', () => {
    const specs = discoverCandidates([`${file}#1`]);
    expect(specs.map((s) => s.name)).toEqual([`${file}#1`]);
    expect(specs[0].kind === 'structure' && specs[0].source.frame).toBe(1);
  });

  it('traj.xyz#7 on a 2-frame file says the frame is out of range', () => {
    expect(() => discoverCandidates([`${file}#7`])).toThrow(/traj\.xyz: frame 7 does not exist \(the file has 2 frames, numbered from 0\)/);
  });
});
