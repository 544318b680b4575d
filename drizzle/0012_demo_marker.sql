-- The demo organisation is marked rather than found by its name (an organisation merely named like
-- it is nobody's demo). At most one organisation is the demo.
ALTER TABLE "organisations" ADD COLUMN "is_demo" boolean DEFAULT false NOT NULL;--> statement-breakpoint
CREATE UNIQUE INDEX "organisations_one_demo" ON "organisations" USING btree ("is_demo") WHERE "organisations"."is_demo";--> statement-breakpoint
-- A database seeded before the mark existed: its demo organisation is the one holding the demo API
-- token (seeds/load-accounts.ts), which no real organisation has.
UPDATE "organisations" SET "is_demo" = true
WHERE "id" = (
  SELECT "org_id" FROM "api_tokens"
  WHERE "token_hash" = encode(sha256(convert_to('sunsift-demo-token', 'UTF8')), 'hex')
  ORDER BY "created_at" LIMIT 1
);
