import { loadServiceConfig, type ServiceConfig, type ServiceConfigOptions } from './service-config.js';

/** For the start commands: the validated config, or its message on stderr and exit code 2. */
export function serviceConfigOrExit(options: ServiceConfigOptions = {}): ServiceConfig {
  try {
    return loadServiceConfig(process.env, options);
  } catch (error) {
    process.stderr.write(`${(error as Error).message}\n`);
    process.exit(2);
  }
}
