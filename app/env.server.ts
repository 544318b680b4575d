import { z } from "zod";

const schema = z.object({
  NODE_ENV: z.enum(["development", "production", "test"]).default("development"),
  DATABASE_URL: z.string().url("DATABASE_URL must be a postgres:// URL"),
  SESSION_SECRET: z.string().min(32, "SESSION_SECRET must be at least 32 characters"),
  APP_URL: z.string().url().default("http://127.0.0.1:3000"),
  S3_ENDPOINT: z.string().url().default("http://127.0.0.1:4569"),
  S3_PUBLIC_ENDPOINT: z.string().url().optional(),
  S3_BUCKET: z.string().min(3).default("sunsift-uploads"),
  S3_REGION: z.string().default("us-east-1"),
  S3_ACCESS_KEY_ID: z.string().default("S3RVER"),
  S3_SECRET_ACCESS_KEY: z.string().default("S3RVER"),
  SMTP_HOST: z.string().default("127.0.0.1"),
  SMTP_PORT: z.coerce.number().int().default(2525),
  MAIL_FROM: z.string().default("Sunsift <no-reply@sunsift.test>"),
  UPLOAD_MAX_BYTES: z.coerce.number().int().positive().default(2 * 1024 ** 3),
  /** The demo (its accounts, the outbox page): on only when set to 1. */
  SUNSIFT_DEMO: z.enum(["0", "1"]).default("0"),
  /** A proxy of ours is in front: believe its X-Forwarded-For (right-most entry) and X-Forwarded-Proto. */
  TRUST_PROXY: z.enum(["0", "1"]).default("0"),
});

export type Env = z.infer<typeof schema>;

let cached: Env | undefined;

/** Validated once at boot; a missing or malformed variable stops the process with its name. */
export function env(): Env {
  if (cached) return cached;
  const parsed = schema.safeParse(process.env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`).join("\n");
    throw new Error(`Invalid environment:\n${lines}`);
  }
  cached = parsed.data;
  return cached;
}
