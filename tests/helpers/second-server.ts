/**
 * A second scripts/serve.mjs on a port of its own (TEST_PORT + offset), on the test database and
 * build, with some of the test server's environment left out (TRUST_PROXY, SUNSIFT_DEMO…): the app
 * as `npm start` or a real installation runs it. Waits until /healthz answers.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { join } from "node:path";

export const ROOT = join(import.meta.dirname, "../..");
export const BUILD = process.env.BUILD_DIR ?? "build";

export interface SecondServer {
  base: string;
  process: ChildProcess;
  /** Everything it printed so far. */
  output(): string;
}

export async function startSecondServer(offset: number, without: readonly string[]): Promise<SecondServer> {
  const port = Number(process.env.TEST_PORT ?? 3100) + offset;
  const base = `http://127.0.0.1:${port}`;
  const env: NodeJS.ProcessEnv = { ...process.env };
  for (const name of without) delete env[name];
  const child = spawn(process.execPath, ["scripts/serve.mjs", `./${BUILD}/server/index.js`], {
    cwd: ROOT,
    env: { ...env, PORT: String(port), HOST: "127.0.0.1", APP_URL: base },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  child.stdout!.on("data", (c: Buffer) => (output += c.toString()));
  child.stderr!.on("data", (c: Buffer) => (output += c.toString()));
  for (let i = 0; i < 150; i++) {
    try {
      if ((await fetch(`${base}/healthz`)).ok) return { base, process: child, output: () => output };
    } catch {
      /* not listening yet */
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  child.kill("SIGKILL");
  throw new Error(`scripts/serve.mjs did not start:\n${output}`);
}
