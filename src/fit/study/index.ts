/**
 * Study files: a declarative description of a refinement (data sets, structures, ranges,
 * windows, parameters, shell rules), read from YAML, validated with errors that name the file,
 * line and key, and run as one refinement. See ./schema.ts for the keys, ./compile.ts for the
 * rule shorthands and ./run.ts for the output.
 */
export { parseStudyText, readStudyFile, STUDY_DEFAULT_RADIUS, STUDY_DEFAULT_TOLERANCE, type StudyFile, type StudyDataset } from './load';
export { prepareStudy, relocate, AUTO_MARGIN, AUTO_PARAMETERS, DEFAULT_QUANTITIES, EACH_DEFAULTS, QUANTITIES, type PreparedStudy, type PreparedDataset, type PrepareOptions, type SelectedShell } from './compile';
export { runStudy, studyDocument, type StudyFitResult, type StudyDocument } from './run';
export { studySchema, type StudyInput } from './schema';
export { parseYamlSource, formatKeyPath, type YamlSource, type KeyPath } from './yaml-source';
export { editDistance, nearest, suggestion, validateSource } from './validate';
export { STUDY_SYMBOLS, replaceNames, substituteValues } from './symbols';
export { checkRankSection, rankSectionSchema } from './rank-section';
