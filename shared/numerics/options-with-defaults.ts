/**
 * Options over their defaults, where an option given as undefined keeps its
 * default: callers such as the CLI pass every option, set or not, and a plain
 * object spread would let an undefined overwrite the default.
 */
export function optionsWithDefaults<T extends object>(defaults: T, options: Partial<T>): T {
  const given = Object.fromEntries(Object.entries(options).filter(([, value]) => value !== undefined));
  return { ...defaults, ...given };
}
