/**
 * Schema violations in plain words. The issue objects are those of the two
 * validators fastify runs here: ajv (its documented error format,
 * https://ajv.js.org/api.html#error-objects) and TypeBox's compiled checker,
 * both produced below from the same schema rather than written by hand.
 */
import Ajv from 'ajv';
import { Type } from 'typebox';
import { Compile } from 'typebox/compile';
import { describe, expect, it } from 'vitest';
import { plainValidationIssues } from '../services/api/plugins/validation-issues.js';

const Schema = Type.Object(
  { method: Type.Optional(Type.Union([Type.Literal('posterior-mean'), Type.Literal('bayes'), Type.Literal('fourier')])), stages: Type.Optional(Type.Integer()) },
  { additionalProperties: false },
);
const bad = { method: 'magic', stages: 4.5, operator: 'bob' };

describe('plainValidationIssues', () => {
  it('turns TypeBox issues into one line per field: allowed values listed, unknown fields named', () => {
    const issues = plainValidationIssues(Compile(Schema).Errors(bad), 'querystring');
    expect(issues).toEqual(
      expect.arrayContaining([
        { field: 'querystring/method', message: 'must be one of "posterior-mean", "bayes", "fourier"' },
        { field: 'querystring/stages', message: 'must be integer' },
        { field: 'querystring/operator', message: 'is not a known field' },
      ]),
    );
    expect(issues.filter((issue) => issue.field === 'querystring/operator')).toHaveLength(1);
    expect(issues.filter((issue) => issue.field === 'querystring/method')).toHaveLength(1);
  });

  it('does the same for ajv issues (all errors reported)', () => {
    const validate = new Ajv({ allErrors: true }).compile(Schema);
    expect(validate(bad)).toBe(false);
    expect(plainValidationIssues(validate.errors ?? [], 'body')).toEqual(
      expect.arrayContaining([
        { field: 'body/method', message: 'must be one of "posterior-mean", "bayes", "fourier"' },
        { field: 'body/operator', message: 'is not a known field' },
      ]),
    );
  });
});
