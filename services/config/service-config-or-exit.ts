import { loadServiceConfig, unknownVariableWarnings, type ServiceConfig, type ServiceConfigOptions } from './service-config.js';

/** For the start commands: the validated config, or its message on stderr and exit code 2; a line on stderr for each unknown HEATPATH_* variable. */
export function serviceConfigOrExit(options: ServiceConfigOptions = {}): ServiceConfig {
  for (const warning of unknownVariableWarnings(process.env)) process.stderr.write(`heatpath: warning: ${warning}\n`);
  try {
    return loadServiceConfig(process.env, options);
  } catch (error) {
    process.stderr.write(`${(error as Error).message}\n`);
    process.exit(2);
  }
}
