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

/** The shape every problem message shows, with an example to copy. */
const EXPECTED_ENTRY = 'name:role:token, for example bench1:bench:<token of 16 or more characters, e.g. from `openssl rand -hex 24`>';

export function sha256(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/** One `name:role:token` entry and where it was written, for messages. */
interface KeyEntry {
  text: string;
  where: string;
}

/**
 * Entries of HEATPATH_API_KEYS: separated by commas or new lines. There are no
 * comments in the variable: a `#` is part of a token like any other character.
 */
function keyListEntries(text: string, source: string): KeyEntry[] {
  return text
    .split(/[,\n]/)
    .map((entry) => entry.trim())
    .filter((entry) => entry !== '')
    .map((entry, index) => ({ text: entry, where: `${source} entry ${index + 1}` }));
}

/**
 * Entries of a keys file: one a line (commas also separate), blank lines and
 * whole-line `#` comments skipped. A `#` after an entry is not a comment: it
 * would otherwise cut a token that contains one, without a word.
 */
function keyFileEntries(text: string, source: string): KeyEntry[] {
  const entries: KeyEntry[] = [];
  text.split(/\r?\n/).forEach((line, lineIndex) => {
    if (line.trim().startsWith('#')) return;
    const parts = line.split(',').map((part) => part.trim()).filter((part) => part !== '');
    parts.forEach((part, partIndex) => {
      entries.push({ text: part, where: `${source} line ${lineIndex + 1}${parts.length > 1 ? ` entry ${partIndex + 1}` : ''}` });
    });
  });
  return entries;
}

/**
 * Parse the `name:role:token` entries of HEATPATH_API_KEYS (`layout`
 * 'variable') or of a keys file ('file'). Returns the keys and one message per
 * problem, naming the entry by its place (a file's by line) and its key name
 * but never the token.
 */
export function parseApiKeyList(text: string, source: string, layout: 'variable' | 'file'): { keys: ApiKey[]; problems: string[] } {
  const entries = layout === 'file' ? keyFileEntries(text, source) : keyListEntries(text, source);
  const keys: ApiKey[] = [];
  const problems: string[] = [];
  const tokenOwners = new Map<string, string>();
  for (const { text, where } of entries) {
    const [name, role, ...tokenParts] = text.split(':');
    const token = tokenParts.join(':');
    if (!name || !role || !token) {
      problems.push(`${where} is not ${EXPECTED_ENTRY}`);
      continue;
    }
    if (!/^[A-Za-z0-9_.-]+$/.test(name)) problems.push(`${where}: key name "${name}" may only use letters, digits, _ . -`);
    if (!isApiRole(role)) problems.push(`${where} (${name}): role "${role}" is not one of ${apiRoles.join(', ')}`);
    if (token.length < minimumTokenLength) problems.push(`${where} (${name}): token is shorter than ${minimumTokenLength} characters`);
    // No bench sends a token with a space, tab or control character: such a token is a note or comment run into it.
    if (/[\s\p{Cc}]/u.test(token)) {
      problems.push(`${where} (${name}): token holds a space or control character: a comment must be a line of its own, starting with #`);
    }
    if (keys.some((key) => key.name === name)) problems.push(`${where}: key name "${name}" is used twice`);
    const digest = sha256(token).toString('hex');
    const owner = tokenOwners.get(digest);
    // A request is matched to the first key with its token, so the second could never be used with its own role.
    if (owner !== undefined) problems.push(`${where}: keys "${owner}" and "${name}" have the same token: give each key a token of its own`);
    else tokenOwners.set(digest, name);
    if (isApiRole(role)) keys.push({ name, role, tokenSha256: sha256(token) });
  }
  if (entries.length === 0) problems.push(`${source} holds no keys`);
  return { keys, problems };
}

function isApiRole(role: string): role is ApiRole {
  return (apiRoles as readonly string[]).includes(role);
}
