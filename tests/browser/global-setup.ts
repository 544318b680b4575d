/** The test command (scripts/test.sh) starts PostgreSQL, the object store, the worker and the app. */
export default async function setup() {
  const base = process.env.APP_URL;
  if (!base || !process.env.DATABASE_URL) throw new Error("Run the tests with `npm test`: it starts the database and the app first.");
  const res = await fetch(`${base}/healthz`).catch(() => null);
  if (!res?.ok) throw new Error(`The test app does not answer at ${base}/healthz: run the tests with \`npm test\`.`);
}
