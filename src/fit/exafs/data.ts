/**
 * Measured data for a fit: a saved reduction (our "shellrank-chi" JSON) or a raw beamline file
 * reduced with default settings (which are reported).
 */
import { sha256 } from '../../core/hash';
import { readTextFile } from '../../core/files';
import { readScanText } from '../../read/spectrum/index';
import { chiFromJson, reduceScan, CHI_FORMAT, type Chi } from '../../reduce/index';

export interface LoadedChi {
  chi: Chi;
  file: string;
  sha256: string;
  /** True when the file was raw data reduced here with default settings. */
  reducedHere: boolean;
}

export function loadChiOrReduce(path: string): LoadedChi {
  const text = readTextFile(path);
  const hash = sha256(text);
  const head = text.trimStart();
  if (head.startsWith('{') && head.includes(`"${CHI_FORMAT}"`)) {
    return { chi: chiFromJson(text, path), file: path, sha256: hash, reducedHere: false };
  }
  const scan = readScanText(text, path);
  const { chi } = reduceScan(scan);
  return { chi, file: path, sha256: hash, reducedHere: true };
}
