/**
 * Physical line numbers for parsed CSV rows. A CSV parser reports rows, but a quoted value may
 * span lines; counting the newlines inside each row's values keeps messages pointing at the line
 * an editor shows. Constant memory, so it also suits a streaming parser.
 */
export function createLineCounter(firstLine = 1) {
  let next = firstLine;
  return {
    /** Line on which this row starts; call once per row, in order, header included. */
    lineOf(fields: string[]): number {
      const line = next;
      let extra = 0;
      for (const f of fields) {
        for (let i = f.indexOf("\n"); i >= 0; i = f.indexOf("\n", i + 1)) extra++;
        // Lone CRs (old Mac files) also end lines; CRLF counts once via its LF.
        for (let i = f.indexOf("\r"); i >= 0; i = f.indexOf("\r", i + 1)) if (f[i + 1] !== "\n") extra++;
      }
      next += 1 + extra;
      return line;
    },
  };
}
