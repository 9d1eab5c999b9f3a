/** The file argument that names standard input (common command-line practice, as in cat and grep). */
export const STANDARD_INPUT_ARGUMENT = '-';

/** The name results and error lines give standard input. */
export const STANDARD_INPUT_NAME = 'stdin';

/** Every byte of standard input, up to its end. */
export async function readStandardInput(): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of process.stdin) chunks.push(typeof chunk === 'string' ? Buffer.from(chunk) : chunk);
  return Buffer.concat(chunks);
}
