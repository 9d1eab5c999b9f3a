/**
 * Why the API could not listen on HOST:PORT, in one line naming the variable
 * and its value and what to do, for the start commands (started-or-exit.ts)
 * rather than a bare `listen EADDRINUSE` or `getaddrinfo ENOTFOUND`.
 */
export function listenFailure(error: unknown, host: string, port: number): Error {
  const code = (error as NodeJS.ErrnoException | undefined)?.code;
  const where = `HOST=${host} PORT=${port}`;
  switch (code) {
    case 'EADDRINUSE':
      return new Error(`cannot listen on ${where}: the port is in use by another process (another heatpath still running?): stop it (ss -ltnp 'sport = :${port}' names it) or set another PORT`);
    case 'EACCES':
    case 'EPERM':
      return new Error(`cannot listen on ${where}: permission denied (ports below 1024 need privileges): set PORT to 1024 or above, e.g. 8080`);
    case 'ENOTFOUND':
    case 'EAI_AGAIN':
    case 'EAI_NONAME':
      return new Error(`cannot listen on ${where}: HOST is not a name this machine can resolve (${code}): set HOST to one of its addresses, 127.0.0.1 for this machine only or 0.0.0.0 for the lab network`);
    case 'EADDRNOTAVAIL':
      return new Error(`cannot listen on ${where}: HOST is not an address of this machine: set HOST to one of its addresses, 127.0.0.1 for this machine only or 0.0.0.0 for the lab network`);
    default:
      return new Error(`cannot listen on ${where} (${code ?? (error instanceof Error ? error.message : String(error))}): check HOST and PORT`);
  }
}
