/**
 * Schema violations in plain words. The issue objects come from TypeBox's
 * compiled checker (the upload route's validator), produced from a schema
 * rather than written by hand; those of ajv (fastify's validator on the
 * other routes) are checked through a route in test/api-admin-routes.test.ts.
 */
import { Type } from 'typebox';
import { Compile } from 'typebox/compile';
import { describe, expect, it } from 'vitest';
import { plainValidationIssues } from '../shared/schemas/plain-validation-issues.js';

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

  it('names the known field an unknown one most likely meant, as the command line does for options (closest-name.ts)', () => {
    const issues = plainValidationIssues(Compile(Schema).Errors({ Stages: 4, methd: 'bayes', operator: 'bob' }), 'querystring', Schema);
    // Case alone, one letter left out: the known name; nothing near: no guess.
    expect(issues).toEqual(
      expect.arrayContaining([
        { field: 'querystring/Stages', message: 'is not a known field: did you mean stages?' },
        { field: 'querystring/methd', message: 'is not a known field: did you mean method?' },
        { field: 'querystring/operator', message: 'is not a known field' },
      ]),
    );
  });

  it('finds the known fields of a nested object, where the unknown one is (a batch body\'s selection)', () => {
    const Nested = Type.Object({ selection: Type.Object({ sample_id: Type.Optional(Type.String()) }, { additionalProperties: false }) }, { additionalProperties: false });
    const issues = plainValidationIssues(Compile(Nested).Errors({ selection: { sampel_id: 'S-1' } }), 'body', Nested);
    expect(issues).toEqual([{ field: 'body/selection/sampel_id', message: 'is not a known field: did you mean sample_id?' }]);
  });
});
