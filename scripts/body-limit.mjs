// @ts-check
/**
 * Request-body limits, enforced while the body arrives (scripts/serve.mjs, in front of React
 * Router). A `(req, res, next)` function, so it plugs into Express as it is.
 *
 * - A body whose Content-Length is over the path's limit is answered 413 at once, before a byte of
 *   it is read, and the connection is closed.
 * - A body without a length (chunked) is counted as it arrives and held (at most the limit) until
 *   it is complete; only then does the app see it. At the limit: 413 and the connection is closed.
 *   The app never sees part of a body.
 * - A route marked `streams` (the readings API: it spools to a temporary file and stops at its own
 *   limit) gets chunked bodies as they arrive.
 *
 * The limits are documented in DEVELOPERS.md ("Request-body limits"); keep the two together.
 */

export const KiB = 1024;
export const MiB = 1024 * KiB;

/** Plain forms and JSON: sign-in, forgot-password, reset, invitations, settings, work orders… */
export const DEFAULT_LIMIT = 64 * KiB;

/**
 * @typedef {{ path: RegExp; limit: number; what: string; streams?: boolean }} LimitRule
 */

/**
 * The routes that take more than a plain form, by pathname (after `.`/`..` are resolved, as the
 * router sees it). `(\.data)?` is React Router's form post from a page already open.
 * @param {{ uploadMaxBytes?: number }} [o]
 * @returns {LimitRule[]}
 */
export function limitTable(o = {}) {
  const uploadMaxBytes = o.uploadMaxBytes ?? 2 * 1024 * MiB;
  const id = "[^/]+";
  return [
    // Browsers upload readings straight to the object store (a presigned URL); this is the API.
    { path: new RegExp(`^/api/v1/sites/${id}/readings$`), limit: uploadMaxBytes, what: "a production export (API)", streams: true },
    { path: new RegExp(`^/api/v1/sites/${id}/layout$`), limit: 20 * MiB, what: "a layout CSV (API)" },
    // Forms carry a little more than their file limit, so that a file somewhat too large still
    // gets the screen's own message ("The file is 22.0 MB; a layout may be at most 20 MB").
    { path: new RegExp(`^/sites/${id}/layout(\\.data)?$`), limit: 32 * MiB, what: "a layout CSV (20 MB) in a form" },
    { path: new RegExp(`^/api/v1/sites/${id}/findings$`), limit: 5 * MiB, what: "a findings CSV (API)" },
    // Findings images go straight to the object store (presigned); the form carries the CSV.
    { path: new RegExp(`^/sites/${id}/flights/${id}(\\.data)?$`), limit: 8 * MiB, what: "a findings CSV (5 MB) in a form" },
    // Up to 8 photos of 15 MB each (app/services/photos.server.ts).
    { path: new RegExp(`^/sites/${id}/work-orders/(?!new(\\.data)?$)${id}(\\.data)?$`), limit: 121 * MiB, what: "work-order photos (8 × 15 MB)" },
    { path: new RegExp(`^/sites/${id}/inspections(\\.data)?$`), limit: 121 * MiB, what: "inspection photos (8 × 15 MB)" },
  ];
}

/**
 * @param {string | undefined} url
 * @returns {string}
 */
function pathnameOf(url) {
  try {
    return new URL(url ?? "/", "http://localhost").pathname;
  } catch {
    return "/";
  }
}

/** @param {number} n */
function size(n) {
  return n >= MiB ? `${Math.round(n / MiB)} MB` : `${Math.round(n / KiB)} KB`;
}

/**
 * @param {LimitRule[]} [table]
 * @param {{ defaultLimit?: number }} [o]
 * @returns {(req: import("node:http").IncomingMessage, res: import("node:http").ServerResponse, next: () => void) => void}
 */
export function bodyLimit(table = limitTable(), o = {}) {
  const defaultLimit = o.defaultLimit ?? DEFAULT_LIMIT;
  return function bodyLimitMiddleware(req, res, next) {
    const length = req.headers["content-length"];
    const chunked = req.headers["transfer-encoding"] !== undefined;
    if (length === undefined && !chunked) return next(); // no body
    const pathname = pathnameOf(req.url);
    const rule = table.find((r) => r.path.test(pathname));
    const limit = rule?.limit ?? defaultLimit;
    if (length !== undefined && !chunked) {
      // Node's parser has checked the header is a number; it also never delivers more than it says.
      if (Number(length) > limit) return refuse(req, res, limit);
      return next();
    }
    if (rule?.streams) return next();
    holdUntilComplete(req, res, limit, next);
  };
}

/**
 * Counts the chunks the HTTP parser hands the request (`push`) and holds them until the body is
 * complete; bytes already buffered in the request count too.
 * @param {import("node:http").IncomingMessage} req
 * @param {import("node:http").ServerResponse} res
 * @param {number} limit
 * @param {() => void} next
 */
function holdUntilComplete(req, res, limit, next) {
  const push = req.push;
  /** @type {Buffer[]} */
  const held = [];
  let seen = req.readableLength;
  let refused = false;
  if (seen > limit) return refuse(req, res, limit);
  /** @type {(chunk: any, encoding?: BufferEncoding) => boolean} */
  req.push = function (chunk, encoding) {
    if (refused) return false;
    if (chunk === null) {
      req.push = push;
      for (const c of held) push.call(req, c);
      held.length = 0;
      push.call(req, null);
      process.nextTick(next); // not inside the HTTP parser's callback
      return false;
    }
    seen += chunk.length;
    if (seen > limit) {
      refused = true;
      held.length = 0;
      refuse(req, res, limit);
      return false;
    }
    held.push(typeof chunk === "string" ? Buffer.from(chunk, encoding) : chunk);
    return true;
  };
}

/**
 * 413, then the connection is closed instead of reading the rest of the body. The answer is written
 * whole (by its length) at once, but the response is ended only when the socket goes: ending it
 * would make Node read and discard the rest of the body, or close the socket with the body unread,
 * which resets the connection and can lose the answer on its way. Meanwhile nothing reads the
 * socket, so the client's writes stall; it has the answer and goes, or is cut off after 2 s.
 * @param {import("node:http").IncomingMessage} req
 * @param {import("node:http").ServerResponse} res
 * @param {number} limit
 */
function refuse(req, res, limit) {
  const body = `The request is too large: at most ${size(limit)} can be sent here.\n`;
  res.writeHead(413, { "Content-Type": "text/plain; charset=utf-8", "Content-Length": Buffer.byteLength(body), Connection: "close" });
  res.write(body);
  req.pause();
  const socket = req.socket;
  const cut = setTimeout(() => {
    res.end();
    socket.destroy();
  }, 2000);
  cut.unref();
  socket.once("close", () => clearTimeout(cut));
}
