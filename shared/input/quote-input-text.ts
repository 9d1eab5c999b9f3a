/** Longest piece of user input an error message repeats. */
export const QUOTED_TEXT_MAX_CHARS = 40;

/**
 * Cut a piece of user input for an error message or location, so that a huge
 * or binary field never floods a log or an HTTP answer.
 */
export function shortenInputText(text: string): string {
  return text.length > QUOTED_TEXT_MAX_CHARS ? `${text.slice(0, QUOTED_TEXT_MAX_CHARS)}…` : text;
}

/** The shortened text in double quotes, control characters escaped. */
export function quoteInputText(text: string): string {
  return JSON.stringify(shortenInputText(text));
}

/** Most names an error quotes; a longer list is cut with "…". */
const QUOTED_NAMES_MAX = 6;

/** Names (a header's) quoted and joined with commas, the first QUOTED_NAMES_MAX of them. */
export function quoteInputNames(names: readonly string[]): string {
  const shown = names.slice(0, QUOTED_NAMES_MAX).map(quoteInputText).join(', ');
  return names.length > QUOTED_NAMES_MAX ? `${shown}, …` : shown;
}
