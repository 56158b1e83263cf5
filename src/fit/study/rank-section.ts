/**
 * The `rank:` section of a study file: reserved for the ranking stage (src/rank), which will rank
 * candidate structures against the study's data sets. Until it is filled in, the section is
 * accepted by the schema (so the file's other errors are still reported with their lines) and
 * refused by {@link checkRankSection} with a message at its line.
 *
 * Extension point, for whoever builds ranking from studies:
 * 1. replace {@link rankSectionSchema} with the real zod schema (strict objects, so a typo'd key
 *    gets the nearest-key suggestion of ./validate.ts for free);
 * 2. in ./run.ts, `runStudy` dispatches on `study.input.rank`: add the ranking branch there, using
 *    `prepareStudy` (./compile.ts) for the data sets and parameters the candidates share;
 * 3. delete {@link checkRankSection}'s refusal.
 */
import { z } from 'zod';
import { InputError } from '../../core/errors';
import type { StudyFile } from './load';

/** Schema of the `rank:` section (placeholder: any value until ranking from studies exists). */
export const rankSectionSchema = z.unknown();

/** Refuse a `rank:` section until ranking from study files is implemented. */
export function checkRankSection(study: StudyFile): void {
  if (study.input.rank === undefined) return;
  throw new InputError('ranking from a study file is not available yet; remove the rank section to run the fit', study.where(['rank']));
}
