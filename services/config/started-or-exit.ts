/**
 * For the start commands: what `start` resolves to, or its error's message on
 * stderr and exit code 1. A data directory that cannot be created or a port
 * in use is an operator's fix, not a stack trace.
 */
export async function startedOrExit<T>(what: string, start: Promise<T>): Promise<T> {
  try {
    return await start;
  } catch (error) {
    process.stderr.write(`heatpath: ${what} did not start: ${error instanceof Error ? error.message : String(error)}\n`);
    process.exit(1);
  }
}
