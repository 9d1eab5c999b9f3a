/** A key an object of a JSON text names twice. */
export interface JsonDuplicateKey {
  /** Keys from the top level down to the repeated one: ['time_s'] or ['meta', 'power_W']. */
  path: string[];
  /** Lines (from 1) of the first and the second occurrence. */
  firstLine: number;
  line: number;
  /** Columns (characters from 1, at the opening quote) of the first and the second occurrence: a one-line JSON has both on line 1. */
  firstColumn: number;
  column: number;
}

const QUOTE = 34;
const BACKSLASH = 92;
const NEWLINE = 10;
const COLON = 58;
const COMMA = 44;
const OPEN_OBJECT = 123;
const CLOSE_OBJECT = 125;
const OPEN_ARRAY = 91;
const CLOSE_ARRAY = 93;

interface Frame {
  isObject: boolean;
  /** Keys seen with their lines and columns; null for an array, or an object too deep to look at. */
  keys: Map<string, { line: number; column: number }> | null;
  path: string[];
  /** The last key read in this object: the name of a value that opens a frame. */
  lastKey: string;
}

/**
 * The first key named twice in one object at most `depth` levels down (1:
 * the top-level object only) of a text that JSON.parse has accepted, which
 * keeps the last value of a repeated key without a word (RFC 8259, 4: names
 * "SHOULD be unique", and parsers differ in which one they keep). One pass
 * over the characters, no values built: arrays of numbers are stepped over
 * as they are read. `onKey` hears of every key of the objects looked at, with
 * its path and line, up to the first repeated one (the lines of a "meta"
 * object's keys, for errors about their values).
 */
export function firstDuplicateJsonKey(text: string, depth: number, onKey?: (path: readonly string[], line: number) => void): JsonDuplicateKey | undefined {
  const stack: Frame[] = [];
  let line = 1;
  let lineStart = 0;
  let expectingKey = false;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code === NEWLINE) {
      line++;
      lineStart = i + 1;
    } else if (code === QUOTE) {
      const start = i;
      for (i++; text.charCodeAt(i) !== QUOTE; i++) if (text.charCodeAt(i) === BACKSLASH) i++;
      if (!expectingKey) continue;
      expectingKey = false;
      const frame = stack[stack.length - 1];
      const raw = text.slice(start, i + 1);
      const key = raw.includes('\\') ? (JSON.parse(raw) as string) : raw.slice(1, -1);
      frame.lastKey = key;
      if (frame.keys === null) continue;
      const column = start - lineStart + 1;
      const first = frame.keys.get(key);
      if (first !== undefined) return { path: [...frame.path, key], firstLine: first.line, line, firstColumn: first.column, column };
      frame.keys.set(key, { line, column });
      onKey?.([...frame.path, key], line);
    } else if (code === OPEN_OBJECT || code === OPEN_ARRAY) {
      const parent = stack[stack.length - 1];
      const path = parent === undefined ? [] : parent.isObject ? [...parent.path, parent.lastKey] : parent.path;
      const isObject = code === OPEN_OBJECT;
      stack.push({ isObject, keys: isObject && stack.length < depth ? new Map() : null, path, lastKey: '' });
      expectingKey = code === OPEN_OBJECT;
    } else if (code === CLOSE_OBJECT || code === CLOSE_ARRAY) {
      stack.pop();
      expectingKey = false;
    } else if (code === COMMA) {
      // A comma in an object comes before the next key, in an array before the next element.
      expectingKey = stack[stack.length - 1]?.isObject === true;
    } else if (code === COLON) {
      expectingKey = false;
    }
  }
  return undefined;
}
