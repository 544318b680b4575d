/**
 * Uploads: size limits, keys nobody can guess, presigned URLs that expire (checked against the
 * local S3 fake, which verifies AWS Signature V4 query expiry). Content checks (a CSV that is not
 * text, an image that is not an image) are in hostile-input.test.ts.
 */
import { describe, expect, it } from "vitest";
import { createUpload, formatBytes, maxUploadBytes } from "../../app/models/imports.server";
import { MAX_IMAGE_BYTES, presignImages } from "../../app/models/findings.server";
import { newObjectKey, presignGet, presignPut, putObject } from "../../app/services/storage.server";
import { createOrg } from "../helpers/db";
import { insertFlight, plantWithFlag } from "./flights-fixture";

describe("uploads", () => {
  it("object keys carry 128 random bits and no folder from the file name", () => {
    const keys = Array.from({ length: 200 }, () => newObjectKey("imports/site", "../../etc/passwd"));
    expect(new Set(keys).size).toBe(200);
    for (const k of keys) {
      // 16 random bytes in base64url are 22 characters (132 bits of text, 128 of randomness).
      expect(k).toMatch(/^imports\/site\/[A-Za-z0-9_-]{22}\/[A-Za-z0-9._-]+$/);
      expect(k.split("/").slice(3)).toEqual(["_.._etc_passwd"]);
      expect(k.split("/")).not.toContain("..");
    }
  });

  it("presigned PUT and GET URLs expire: 15 minutes to upload, 5 minutes to download", async () => {
    const key = newObjectKey("tests/expiry", "a.csv");
    const put = new URL(await presignPut(key));
    expect(put.searchParams.get("X-Amz-Expires")).toBe("900");
    expect(put.searchParams.get("X-Amz-Signature")).toMatch(/^[0-9a-f]{64}$/);
    const get = new URL(await presignGet(key, "a.csv"));
    expect(get.searchParams.get("X-Amz-Expires")).toBe("300");
  });

  it("an expired presigned URL is refused by the store", async () => {
    const key = newObjectKey("tests/expiry", "late.csv");
    await putObject(key, "a,b\n", 4);
    const put = await presignPut(key, 1);
    // The signature's time is in whole seconds: a 1-second URL can be expired already when fetched
    // at once, so the one fetched before and after expiry gets 3 seconds.
    const get = await presignGet(key, "late.csv", 3);
    expect((await fetch(get)).status).toBe(200);
    await new Promise((r) => setTimeout(r, 4100));
    const late = await fetch(put, { method: "PUT", body: "x" });
    expect(late.status).toBe(403);
    expect(await late.text()).toMatch(/expired/i);
    expect((await fetch(get)).status).toBe(403);
  });

  it("size limits: an export over the limit, an empty one, and oversized images are refused before any upload", async () => {
    const org = await createOrg("UploadLimits");
    const actor = { orgId: org.org.id, userId: org.people.engineer.id };
    const max = maxUploadBytes();
    expect(await createUpload(actor, org.site, { name: "big.csv", size: max + 1 })).toEqual({ ok: false, error: `The file is ${formatBytes(max + 1)}; the limit is ${formatBytes(max)}.` });
    expect(await createUpload(actor, org.site, { name: "none.csv", size: 0 })).toEqual({ ok: false, error: "The file is empty." });
    const p = await plantWithFlag("UploadLimitsImg");
    const flight = await insertFlight(p.siteId, [p.blocks[0]!.id]);
    const r = await presignImages(p.siteId, flight.id, [{ name: "huge.png", size: MAX_IMAGE_BYTES + 1, type: "image/png" }]);
    expect(r).toEqual({ uploads: [], unmatched: [], refused: ["huge.png"] });
  });
});
