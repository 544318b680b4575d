import { z } from "zod";

export const passwordSchema = z.string().min(10, "Use at least 10 characters").max(200, "Use at most 200 characters");

/** Field errors keyed by dotted path, for showing beside each input. */
export function fieldErrors(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.join(".") || "_form";
    if (!(key in out)) out[key] = issue.message;
  }
  return out;
}
