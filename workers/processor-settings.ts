/**
 * What the sandboxed analysis processor needs to know. The AnalysisWorker hands
 * it to its child processes in one environment variable (BullMQ forks them), so
 * several workers with different stores can live in one parent process.
 */
export interface ProcessorSettings {
  dataDir: string;
  redisUrl: string;
  prefix: string;
}

/** Set by the workers for their analysis processes, not by an operator. */
export const SETTINGS_VARIABLE = 'HEATPATH_PROCESSOR_SETTINGS';

export function processorEnvironment(settings: ProcessorSettings): NodeJS.ProcessEnv {
  return { ...process.env, [SETTINGS_VARIABLE]: JSON.stringify(settings) };
}

export function readProcessorSettings(): ProcessorSettings {
  const encoded = process.env[SETTINGS_VARIABLE];
  if (!encoded) throw new Error(`${SETTINGS_VARIABLE} is not set: the analysis processor runs only as a child of AnalysisWorker`);
  return JSON.parse(encoded) as ProcessorSettings;
}
