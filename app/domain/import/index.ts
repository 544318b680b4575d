/**
 * Pure parsing and validation for data import (no I/O). A streaming importer calls, in order:
 *
 * 1. `detectFileProblems(firstBytes)` on the first 1 KB: refuse the file if it returns a message.
 * 2. `inspectSample(text of the first ~256 KB, { devices, zone, isComplete, template? })`: delimiter,
 *    decimal separator, headers, proposed (or template-applied) mapping, date order, interval.
 *    The engineer reviews; `validateMapping(mapping, headers, devices)` must return [] to run.
 * 3. Stream: raw text chunks through `createLineLengthGuard(max).push(chunk)` (refuse on a hit),
 *    then the CSV parser with the inspected delimiter; number rows with
 *    `createLineCounter().lineOf(fields)` (header rows included: the header is line 1), skip rows
 *    up to `inspection.headerLines`, and pass every other row to
 *    `createRowNormaliser(opts).row(fields, line)`. Write `readings`
 *    to COPY, `rejects` to the reject report; stop and refuse the file if `fatal` is set.
 * 4. `summary()` for the import record: counts, missing values, rejects by code, min/max ts,
 *    devices seen.
 *
 * Layout files are small and parsed whole with `parseLayoutCsv(text, existing?)`.
 */
export * from "./metrics";
export * from "./units";
export * from "./file-checks";
export * from "./timestamps";
export * from "./interval";
export * from "./values";
export * from "./mapping";
export { guessColumn, indexDevices } from "./header-match";
export * from "./csv-lines";
export * from "./inspect-sample";
export * from "./row-normaliser";
export * from "./layout";
