import { afterEach, vi } from "vitest";

// A console.error during a test is a bug somewhere: fail the test that caused it.
let errors: unknown[][] = [];
vi.spyOn(console, "error").mockImplementation((...args: unknown[]) => {
  errors.push(args);
});
afterEach(() => {
  const seen = errors;
  errors = [];
  if (seen.length) throw new Error(`console.error was called: ${seen.map((a) => a.map(String).join(" ")).join("\n")}`);
});
