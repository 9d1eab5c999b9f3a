import { closestName } from '../input/closest-name.js';
import { formatInWords, patternInWords } from './worded-patterns.js';

/** One schema violation as fastify's validators (ajv, TypeBox) report it. */
export interface ValidationIssue {
  keyword?: string;
  instancePath?: string;
  params?: Record<string, unknown>;
  message?: string;
}

/** The part of a JSON schema that says which fields an object has. */
export interface SchemaNode {
  properties?: Record<string, unknown>;
}

/** The schema of the object at a JSON pointer (`/selection`), through nested objects' properties. */
function schemaAt(schema: SchemaNode | undefined, objectPath: string): SchemaNode | undefined {
  let node = schema;
  for (const segment of objectPath.split('/').slice(1)) node = node?.properties?.[segment.replaceAll('~1', '/').replaceAll('~0', '~')] as SchemaNode | undefined;
  return node;
}

/** A violation in plain words: the field as `context/path` and what is wrong with it. */
export interface PlainIssue {
  field: string;
  message: string;
}

/**
 * Schema violations in the words a bench script's author needs: a value
 * outside a list is "must be one of a, b, c" (the validators report one
 * "must be equal to constant" per allowed value, then "must match a schema
 * in anyOf"), and an unknown field is named ("must NOT have additional
 * properties" does not say which; TypeBox adds "schema is false"), with the
 * known field it most likely meant (`power_w`: did you mean power_W?), at
 * any depth of `schema` (`selection/sampel_id`: did you mean sample_id?), as
 * the command line does for options. A value that does not match a pattern
 * listed in worded-patterns.ts is told what the field allows in words, as is one not of a format listed there
 * (a date-time without its offset).
 */
export function plainValidationIssues(issues: readonly ValidationIssue[], context: string, schema?: SchemaNode): PlainIssue[] {
  const allowed = new Map<string, unknown[]>();
  for (const issue of issues) {
    if (issue.keyword === 'const' && issue.params && 'allowedValue' in issue.params) {
      const path = issue.instancePath ?? '';
      allowed.set(path, [...(allowed.get(path) ?? []), issue.params.allowedValue]);
    }
  }
  const plain: PlainIssue[] = [];
  const seen = new Set<string>();
  const add = (field: string, message: string) => {
    if (seen.has(`${field} ${message}`)) return;
    seen.add(`${field} ${message}`);
    plain.push({ field, message });
  };
  const unknown = (objectPath: string, name: string) => {
    const meant = closestName(name, Object.keys(schemaAt(schema, objectPath)?.properties ?? {}));
    return `is not a known field${meant === undefined ? '' : `: did you mean ${meant}?`}`;
  };
  for (const issue of issues) {
    const path = issue.instancePath ?? '';
    const field = `${context}${path}`;
    const values = allowed.get(path);
    if (values !== undefined && (issue.keyword === 'const' || issue.keyword === 'anyOf')) {
      add(field, `must be one of ${values.map((value) => JSON.stringify(value)).join(', ')}`);
    } else if (issue.keyword === 'additionalProperties') {
      const named = issue.params?.additionalProperty ?? issue.params?.additionalProperties;
      for (const name of [named].flat()) if (typeof name === 'string') add(`${field}/${name}`, unknown(path, name));
    } else if (issue.keyword === 'boolean' && issue.message === 'schema is false') {
      add(field, unknown(path.slice(0, path.lastIndexOf('/')), path.slice(path.lastIndexOf('/') + 1)));
    } else if (issue.keyword === 'pattern' && patternInWords(issue.params?.pattern) !== undefined) {
      add(field, `must be ${patternInWords(issue.params?.pattern)}`);
    } else if (issue.keyword === 'format' && formatInWords(issue.params?.format) !== undefined) {
      add(field, `must be ${formatInWords(issue.params?.format)}`);
    } else {
      add(field, issue.message ?? 'is invalid');
    }
  }
  return plain;
}
