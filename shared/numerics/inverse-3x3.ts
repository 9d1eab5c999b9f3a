/**
 * The inverse of a 3 x 3 matrix by its adjugate (cofactors over the determinant), or undefined when it is singular.
 * For the small normal equations whose inverse's diagonal is a fitted parameter's variance.
 */
export function inverse3x3(m: readonly (readonly number[])[]): number[][] | undefined {
  const cofactor = (r: number, c: number) => {
    const [r1, r2] = [0, 1, 2].filter((i) => i !== r);
    const [c1, c2] = [0, 1, 2].filter((j) => j !== c);
    return (-1) ** (r + c) * (m[r1][c1] * m[r2][c2] - m[r1][c2] * m[r2][c1]);
  };
  const determinant = m[0][0] * cofactor(0, 0) + m[0][1] * cofactor(0, 1) + m[0][2] * cofactor(0, 2);
  if (!(Math.abs(determinant) > 0)) return undefined;
  return [0, 1, 2].map((row) => [0, 1, 2].map((column) => cofactor(column, row) / determinant));
}
