// @ts-check
/**
 * The production web server: `node scripts/serve.mjs [build/server/index.js]` (HOST, PORT).
 *
 * In this order, for each request:
 *  1. built assets (`/assets/…`, fingerprinted: cached for a year) and the files of build/client
 *     and public/ (favicon, fonts), only for paths that name a file;
 *  2. a kept answer (app/services/change-feed.server.ts): the pages and chart series people ask
 *     for most, kept per session until the database records a change; the lookup is the same one
 *     React Router would make, it just skips building a Request and running the router for it;
 *  3. React Router (@react-router/node's request listener) for everything else.
 * Before any of them, request bodies are held to the limit of their path (scripts/body-limit.mjs):
 * 413 before a body over it is read.
 * Answers are gzip-compressed when the browser accepts it. Requests are logged when they fail
 * (status ≥ 500), are refused (4xx) or are slow (≥ 1 s); LOG_REQUESTS=1 logs every request.
 * Forwarded headers are believed only with TRUST_PROXY=1 (a proxy of ours in front; the tests set
 * it to play several client addresses): X-Forwarded-For is cut to its right-most entry (the one our
 * proxy appended; what is left of it the client wrote) and X-Forwarded-Proto is kept. Without it,
 * X-Forwarded-For is replaced by the socket's address and the other forwarded headers are dropped.
 */
import http from "node:http";
import path from "node:path";
import { randomBytes } from "node:crypto";
import { pathToFileURL } from "node:url";
import compression from "compression";
import serveStatic from "serve-static";
import { createRequestListener } from "@react-router/node";
import { bodyLimit, limitTable } from "./body-limit.mjs";

const buildFile = path.resolve(process.argv[2] ?? "build/server/index.js");
/** @type {import("react-router").ServerBuild} */
const build = await import(pathToFileURL(buildFile).href);
/** @type {(method: string, url: string, auth: { cookie?: string | null; authorization?: string | null }, nonce: string | null) => Promise<{ status: number; headers: Headers; body: string } | null>} */
const keptAnswer = build.entry.module.keptAnswer;
const mode = process.env.NODE_ENV ?? "production";
const router = createRequestListener({ build, mode });
const compress = compression();
const assetsDir = path.resolve(build.assetsBuildDirectory, "assets") + path.sep;
// Files under build/client/assets carry a content hash in their names: they never change.
const clientFiles = serveStatic(build.assetsBuildDirectory, {
  index: false,
  setHeaders(res, file) {
    res.setHeader("X-Content-Type-Options", "nosniff");
    if (file.startsWith(assetsDir)) res.setHeader("Cache-Control", "public, max-age=31536000, immutable");
  },
});
const publicFiles = serveStatic("public", { maxAge: "1h", index: false, setHeaders: (res) => res.setHeader("X-Content-Type-Options", "nosniff") });
const limitBodies = bodyLimit(limitTable({ uploadMaxBytes: Number(process.env.UPLOAD_MAX_BYTES) || undefined }));
const logAll = process.env.LOG_REQUESTS === "1";
/** Behind a proxy we run (TRUST_PROXY=1), its X-Forwarded-For names the client; otherwise the socket does. */
const trustProxy = process.env.TRUST_PROXY === "1";

/**
 * @param {http.IncomingMessage} req
 * @param {http.ServerResponse} res
 */
async function handle(req, res) {
  const url = req.url ?? "/";
  const pathname = url.split("?")[0] ?? "/";
  const next = () => answer(req, res, pathname);
  // Only a path that names a file (has an extension) can be one; pages never do.
  if (/\.[a-z0-9]+$/i.test(pathname)) return clientFiles(req, res, () => publicFiles(req, res, next));
  return next();
}

/**
 * @param {http.IncomingMessage} req
 * @param {http.ServerResponse} res
 * @param {string} pathname
 */
async function answer(req, res, pathname) {
  if (req.method === "GET" && req.headers.cookie && !req.headers.authorization && typeof keptAnswer === "function" && !pathname.endsWith(".data")) {
    const proto = /** @type {{ encrypted?: boolean }} */ (req.socket).encrypted || forwardedHttps(req) ? "https" : "http";
    try {
      // Kept answers are found by path, query and cookie; the Host header (the client's to set) plays no part.
      const kept = await keptAnswer("GET", `${proto}://localhost${req.url}`, { cookie: req.headers.cookie, authorization: null }, randomBytes(16).toString("base64"));
      if (kept) {
        /** @type {Record<string, string>} */
        const headers = {};
        kept.headers.forEach((value, name) => (headers[name] = value));
        const body = Buffer.from(kept.body, "utf8");
        headers["content-length"] = String(body.length);
        res.writeHead(kept.status, headers);
        res.end(body);
        return;
      }
    } catch {
      // The database could not be asked (restarting): React Router answers, with its error page.
    }
  }
  router(req, res);
}

/**
 * Drops the named headers, in the raw headers too (React Router's Request is built from those).
 * @param {http.IncomingMessage} req
 * @param {string[]} names lower case
 */
function dropHeaders(req, names) {
  const raw = req.rawHeaders;
  for (let i = raw.length - 2; i >= 0; i -= 2) if (names.includes(raw[i]?.toLowerCase() ?? "")) raw.splice(i, 2);
  for (const n of names) delete req.headers[n];
}

/**
 * Replaces X-Forwarded-For with `address`.
 * @param {http.IncomingMessage} req
 * @param {string} address
 */
function setClientAddress(req, address) {
  dropHeaders(req, ["x-forwarded-for"]);
  req.rawHeaders.push("X-Forwarded-For", address);
  req.headers["x-forwarded-for"] = address;
}

/** Forwarded headers other than X-Forwarded-For, which only a proxy of ours may set. */
const FORWARDED = ["x-forwarded-proto", "x-forwarded-host", "x-forwarded-port", "forwarded"];

/**
 * The client's address: with TRUST_PROXY=1 the right-most X-Forwarded-For entry (our proxy appends
 * the address it saw; entries left of it are whatever the client sent), else the socket's.
 * @param {http.IncomingMessage} req
 */
function clientAddressOf(req) {
  const socket = req.socket.remoteAddress ?? "local";
  if (!trustProxy) return socket;
  // Several X-Forwarded-For lines count as one list, in order.
  const entries = req.rawHeaders.flatMap((v, i) => (i % 2 === 0 && v.toLowerCase() === "x-forwarded-for" ? (req.rawHeaders[i + 1] ?? "").split(",") : []));
  return entries.map((e) => e.trim()).filter(Boolean).at(-1) ?? socket;
}

/**
 * Whether our proxy says the client came over https (only believed with TRUST_PROXY=1).
 * @param {http.IncomingMessage} req
 */
function forwardedHttps(req) {
  const proto = req.headers["x-forwarded-proto"];
  return trustProxy && typeof proto === "string" && proto.split(",").at(-1)?.trim().toLowerCase() === "https";
}

const server = http.createServer((req, res) => {
  const started = performance.now();
  // The sign-in limits count failures per address (app/services/session.server.ts clientAddress).
  setClientAddress(req, clientAddressOf(req));
  if (!trustProxy) dropHeaders(req, FORWARDED);
  res.on("finish", () => {
    const ms = performance.now() - started;
    if (logAll || res.statusCode >= 400 || ms >= 1000)
      console.log(`${req.method} ${req.url} ${res.statusCode} ${res.getHeader("content-length") ?? "-"} - ${ms.toFixed(1)} ms`);
  });
  limitBodies(req, res, () =>
    compress(/** @type {any} */ (req), /** @type {any} */ (res), () => {
      handle(req, res).catch((error) => {
        console.error(error);
        if (!res.headersSent) res.writeHead(500, { "content-type": "text/plain" });
        res.end("Internal error");
      });
    }),
  );
});
server.keepAliveTimeout = 65_000;

const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST;
const listening = () => console.log(`[sunsift] http://${host ?? "localhost"}:${port}`);
if (host) server.listen(port, host, listening);
else server.listen(port, listening);
// Stop taking requests, let those under way finish (at most 5 s), then go.
for (const signal of /** @type {const} */ (["SIGTERM", "SIGINT"]))
  process.once(signal, () => {
    server.close(() => process.exit(0));
    setTimeout(() => process.exit(0), 5_000).unref();
  });
