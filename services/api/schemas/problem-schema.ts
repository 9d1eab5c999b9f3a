import { Type, type Static } from 'typebox';

export const problemMediaType = 'application/problem+json';

/**
 * An error answer as RFC 9457 (Problem Details for HTTP APIs) defines it:
 * type, title, status, detail, instance; plus our extension members. `code`
 * is the stable key of shared/errors/error-catalogue.ts.
 */
const ProblemSchema = Type.Object(
  {
    type: Type.String({ description: 'URI naming the problem type (RFC 9457 section 3.1.1).' }),
    title: Type.String(),
    status: Type.Integer(),
    detail: Type.String(),
    instance: Type.String({ description: 'The request path.' }),
    code: Type.String({ description: 'Stable error code clients may branch on.' }),
    hint: Type.String({ description: 'What to do about it.' }),
    request_id: Type.String(),
    file: Type.Optional(Type.String()),
    line: Type.Optional(Type.Integer({ description: 'Line in the uploaded file, from 1.' })),
    column: Type.Optional(Type.Union([Type.Integer(), Type.String()], { description: 'Column number (from 1) or name.' })),
    parameter: Type.Optional(Type.String({ description: 'The analysis parameter or request field the problem is about (early_time_start_s).' })),
    errors: Type.Optional(
      Type.Array(Type.Object({ field: Type.String(), message: Type.String() }), { description: 'Each field that failed validation.' }),
    ),
  },
  { additionalProperties: true },
);
export type Problem = Static<typeof ProblemSchema>;

/** A response schema entry that declares the problem+json media type. */
export const problemResponse = { description: 'Problem details (RFC 9457)', content: { [problemMediaType]: { schema: ProblemSchema } } };

export function problemTypeUri(code: string): string {
  return `urn:heatpath:problem:${code}`;
}
