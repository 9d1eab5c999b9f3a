/**
 * The smallest and largest of the values, as `Math.min(...values)` and
 * `Math.max(...values)` give them, in a plain loop: spreading an array into
 * arguments overflows the call stack on Node 20 from some 80 000 to 130 000
 * values, depending on how deep the call already is.
 * NaN if any value is NaN; [Infinity, -Infinity] for no values (the sign of
 * a zero extreme aside).
 */
export function valueRange(values: ArrayLike<number>): [min: number, max: number] {
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const value = values[i];
    if (Number.isNaN(value)) return [NaN, NaN];
    if (value < min) min = value;
    if (value > max) max = value;
  }
  return [min, max];
}
