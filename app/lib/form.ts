/**
 * Turn flat form fields named with dots (`module.pmp`, `thresholds.robustZ`) into a nested object
 * for zod. Empty strings become undefined so defaults apply; nothing is coerced here.
 */
export function nestForm(form: FormData): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [key, raw] of form.entries()) {
    if (typeof raw !== "string") continue;
    const value = raw.trim() === "" ? undefined : raw;
    const parts = key.split(".");
    let node = out;
    for (let i = 0; i < parts.length - 1; i++) {
      const k = parts[i]!;
      if (typeof node[k] !== "object" || node[k] === null) node[k] = {};
      node = node[k] as Record<string, unknown>;
    }
    const last = parts[parts.length - 1]!;
    if (last.endsWith("[]")) {
      const k = last.slice(0, -2);
      const arr = (node[k] as unknown[] | undefined) ?? [];
      if (value !== undefined) arr.push(value);
      node[k] = arr;
    } else node[last] = value;
  }
  return out;
}
