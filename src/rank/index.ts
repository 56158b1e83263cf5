/**
 * Ranking and screening many candidate structures against one spectrum: the library front door
 * (the `rank`, `screen` and `merge` commands are thin wrappers around it).
 *
 *   const data = loadChiOrReduce('sample.xdi');
 *   const specs = discoverCandidates(['candidates/']);
 *   const { job, candidates } = prepareRanking({ name: 'sample.xdi', file: 'sample.xdi', sha256: data.sha256, chi: data.chi }, specs, { absorber: { element: 'Cu' } }, { cwd: process.cwd() });
 *   const run = await runRanking({ job, candidates, streamDir: 'out', refineTop: 20, shard: null, workers: 2 });
 *   const ranking = assembleRanking([run.prescreenStream], [run.refineStream], 20);
 */
export * from './candidates';
export * from './evaluate';
export * from './output';
export * from './pool';
export * from './prescreen';
export * from './progress';
export * from './recipe';
export * from './run';
export * from './screen';
export * from './setup';
export * from './stream';
export * from './tables';
export * from './verdicts';
export * from './window';
