import { loadServiceConfig, type ServiceConfig } from './service-config.js';

/** For the start commands: the validated config, or its message on stderr and exit code 2. */
export function serviceConfigOrExit(): ServiceConfig {
  try {
    return loadServiceConfig();
  } catch (error) {
    process.stderr.write(`${(error as Error).message}\n`);
    process.exit(2);
  }
}
