/**
 * Repeated keys in a JSON text, which JSON.parse keeps the last of without a
 * word (RFC 8259, 4: object names "SHOULD be unique"; ECMA-262 JSON.parse
 * keeps the last). The expected duplicate is known by construction: the texts
 * are written here from lists of key-value pairs.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { firstDuplicateJsonKey } from '../shared/input/json-duplicate-key.js';

type Pairs = [string, unknown][];
/** A nested object, as its pairs. */
interface Nested {
  pairs: Pairs;
}

/** An object written from its pairs, repeats kept, one pair a line ({} when empty). */
function write(pairs: Pairs, indent = ''): string {
  if (pairs.length === 0) return '{}';
  const inner = pairs.map(([key, value]) => `${indent}  ${JSON.stringify(key)}: ${isNested(value) ? write(value.pairs, `${indent}  `) : JSON.stringify(value)}`);
  return `{\n${inner.join(',\n')}\n${indent}}`;
}

function isNested(value: unknown): value is Nested {
  return typeof value === 'object' && value !== null && 'pairs' in value;
}

describe('firstDuplicateJsonKey', () => {
  it('finds the first repeated key at the top level and one level down, with both lines, in texts JSON.parse accepts', () => {
    const key = fc.constantFrom('time_s', 'meta', 'power_W', 'D1', 'a"b', 'ü', '', 'x\\y');
    const scalar = fc.oneof(fc.double({ noNaN: true, noDefaultInfinity: true }), fc.string({ maxLength: 6 }), fc.constant(null), fc.array(fc.integer(), { maxLength: 4 }));
    const inner = fc.array(fc.tuple(key, scalar), { maxLength: 4 }).map((pairs): Nested => ({ pairs }));
    const outer = fc.array(fc.tuple(key, fc.oneof(scalar, inner)), { maxLength: 5 });
    fc.assert(
      fc.property(outer, (pairs) => {
        const text = write(pairs as Pairs);
        expect(() => JSON.parse(text)).not.toThrow();
        // The expectation, walked in text order: the opening brace is line 1, then one line a pair, and a nested object's closing brace.
        let line = 1;
        // A key's quote stands after its indent: column 3 at the top level, 5 one level down.
        let expected: { path: string[]; firstLine: number; line: number; firstColumn: number; column: number } | undefined;
        const seen = new Map<string, number>();
        for (const [name, value] of pairs as Pairs) {
          line++;
          if (expected === undefined && seen.has(name)) expected = { path: [name], firstLine: seen.get(name)!, line, firstColumn: 3, column: 3 };
          if (!seen.has(name)) seen.set(name, line);
          if (isNested(value)) {
            const innerSeen = new Map<string, number>();
            for (const [innerName] of value.pairs) {
              line++;
              if (expected === undefined && innerSeen.has(innerName)) expected = { path: [name, innerName], firstLine: innerSeen.get(innerName)!, line, firstColumn: 5, column: 5 };
              if (!innerSeen.has(innerName)) innerSeen.set(innerName, line);
            }
            if (value.pairs.length > 0) line++; // the closing brace on its own line
          }
        }
        expect(firstDuplicateJsonKey(text, 2)).toEqual(expected);
      }),
      { numRuns: 400, seed: 20261203 },
    );
  });

  it('looks only as deep as asked, and not into arrays of objects', () => {
    const text = '{"a": {"b": {"c": 1, "c": 2}}, "list": [{"k": 1, "k": 2}]}';
    expect(firstDuplicateJsonKey(text, 2)).toBeUndefined();
    expect(firstDuplicateJsonKey(text, 3)).toEqual({ path: ['a', 'b', 'c'], firstLine: 1, line: 1, firstColumn: 14, column: 22 });
  });

  it('gives the columns of both places on one line (counted by hand in the text), and the lines of the keys it looked at', () => {
    const text = '{"time_s": [1, 2], "meta": {"power_W": 50}, "time_s": [3]}';
    expect(firstDuplicateJsonKey(text, 2)).toMatchObject({ path: ['time_s'], firstLine: 1, line: 1, firstColumn: 2, column: 45 });
    const keys: string[] = [];
    firstDuplicateJsonKey('{\n"meta": {\n "kind": "cooling",\n "power_W": 5\n}\n}', 2, (path, line) => keys.push(`${path.join('/')}@${line}`));
    expect(keys).toEqual(['meta@2', 'meta/kind@3', 'meta/power_W@4']);
  });
});
