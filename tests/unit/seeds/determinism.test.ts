import { mkdirSync, mkdtempSync, rmSync, symlinkSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { generate } from "../../../seeds/generate";
import { buildFixtures } from "../../../seeds/fixtures";
import { hashDir } from "./read";

const tmp = mkdtempSync(join(tmpdir(), "sunsift-seed-det-"));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const run = (name: string, seed: number) =>
  generate({ out: join(tmp, name), seed, end: "2026-10-26", days: 3, combiners: 32 });

describe("generator determinism [P: a seeded PRNG must reproduce its output]", () => {
  it("same seed and end date → byte-identical files", () => {
    run("a", 42);
    run("b", 42);
    const a = hashDir(join(tmp, "a"));
    const b = hashDir(join(tmp, "b"));
    expect(Object.keys(a).length).toBeGreaterThan(8);
    expect(b).toEqual(a);
  });

  it("a different seed → different readings (layout geometry is seed-free)", () => {
    run("c", 43);
    const a = hashDir(join(tmp, "a"));
    const c = hashDir(join(tmp, "c"));
    expect(c["readings-2026-10.csv"]).not.toEqual(a["readings-2026-10.csv"]);
    expect(c["layout.csv"]).toEqual(a["layout.csv"]);
  });

  it("the committed fixtures are what seeds/fixtures.ts builds today", () => {
    // Regenerate into a temp root that borrows the real irradiance file, then compare hashes.
    const root = join(tmp, "fixtures");
    mkdirSync(root, { recursive: true });
    symlinkSync(join(process.cwd(), "fixtures", "irradiance"), join(root, "irradiance"));
    buildFixtures(root);
    for (const name of ["small", "healthy-cloudy"]) {
      expect(hashDir(join(root, name)), `${name}: run npx tsx seeds/fixtures.ts and commit`).toEqual(
        hashDir(join(process.cwd(), "fixtures", name)),
      );
    }
  });
});
