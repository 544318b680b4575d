import { data } from "react-router";

/** Field-name parts that would reach an object's prototype instead of a field of its own. */
const FORBIDDEN_PARTS = new Set(["__proto__", "constructor", "prototype"]);

/**
 * Turn flat form fields named with dots (`module.pmp`, `thresholds.robustZ`) into a nested object
 * for zod. Empty strings become undefined so defaults apply; nothing is coerced here.
 *
 * The objects have no prototype (`Object.create(null)`), and a field name with a `__proto__`,
 * `constructor` or `prototype` part is refused with 400: `__proto__.headers=…` would otherwise
 * write to Object.prototype and break every later response of the process.
 */
export function nestForm(form: FormData): Record<string, unknown> {
  const out: Record<string, unknown> = Object.create(null);
  for (const [key, raw] of form.entries()) {
    if (typeof raw !== "string") continue;
    const value = raw.trim() === "" ? undefined : raw;
    const parts = key.split(".");
    const last = parts[parts.length - 1]!;
    const isList = last.endsWith("[]");
    if (isList) parts[parts.length - 1] = last.slice(0, -2);
    if (parts.some((p) => FORBIDDEN_PARTS.has(p))) {
      throw data({ message: `The form has a field named "${key.slice(0, 80)}", which this page does not take. Reload the page and send it again.` }, { status: 400 });
    }
    let node = out;
    for (let i = 0; i < parts.length - 1; i++) {
      const k = parts[i]!;
      if (typeof node[k] !== "object" || node[k] === null) node[k] = Object.create(null);
      node = node[k] as Record<string, unknown>;
    }
    const k = parts[parts.length - 1]!;
    if (isList) {
      const arr = Array.isArray(node[k]) ? (node[k] as unknown[]) : [];
      if (value !== undefined) arr.push(value);
      node[k] = arr;
    } else node[k] = value;
  }
  return out;
}
