/** The defaults with every option that is given (not undefined) laid over them. */
export function applyDefaults<T extends object>(defaults: T, given: Partial<T>): T {
  const out = { ...defaults };
  for (const [k, v] of Object.entries(given)) if (v !== undefined) (out as Record<string, unknown>)[k] = v;
  return out;
}
