import { createHash } from 'node:crypto';

/** What a key may do: bench uploads and reads, reader reads, admin does everything. */
const apiRoles = ['bench', 'reader', 'admin'] as const;
export type ApiRole = (typeof apiRoles)[number];

/** A configured API key. Only the SHA-256 of the token is kept in memory. */
export interface ApiKey {
  name: string;
  role: ApiRole;
  tokenSha256: Buffer;
}

/** Short tokens can be guessed; 16 characters is the least we accept. */
const minimumTokenLength = 16;

export function sha256(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/**
 * Parse `name:role:token` entries separated by commas or new lines (a keys
 * file may also hold `#` comments). Returns the keys and one message per
 * problem, naming the entry by position and key name but never the token.
 */
export function parseApiKeyList(text: string, source: string): { keys: ApiKey[]; problems: string[] } {
  const keys: ApiKey[] = [];
  const problems: string[] = [];
  const entries = text
    .split(/[,\n]/)
    .map((entry) => entry.replace(/#.*$/, '').trim())
    .filter((entry) => entry !== '');
  entries.forEach((entry, index) => {
    const where = `${source} entry ${index + 1}`;
    const [name, role, ...tokenParts] = entry.split(':');
    const token = tokenParts.join(':');
    if (!name || !role || !token) {
      problems.push(`${where} is not name:role:token`);
      return;
    }
    if (!/^[A-Za-z0-9_.-]+$/.test(name)) problems.push(`${where}: key name "${name}" may only use letters, digits, _ . -`);
    if (!isApiRole(role)) problems.push(`${where} (${name}): role "${role}" is not one of ${apiRoles.join(', ')}`);
    if (token.length < minimumTokenLength) problems.push(`${where} (${name}): token is shorter than ${minimumTokenLength} characters`);
    if (keys.some((key) => key.name === name)) problems.push(`${where}: key name "${name}" is used twice`);
    if (isApiRole(role)) keys.push({ name, role, tokenSha256: sha256(token) });
  });
  if (entries.length === 0) problems.push(`${source} holds no keys`);
  return { keys, problems };
}

function isApiRole(role: string): role is ApiRole {
  return (apiRoles as readonly string[]).includes(role);
}
