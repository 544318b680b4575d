import { PassThrough } from "node:stream";
import { randomBytes } from "node:crypto";
import type { EntryContext, HandleDataRequestFunction } from "react-router";
import { createReadableStreamFromReadable } from "@react-router/node";
import { ServerRouter } from "react-router";
import { isbot } from "isbot";
import type { RenderToPipeableStreamOptions } from "react-dom/server";
import { renderToPipeableStream } from "react-dom/server";
import { noStoreWhenSignedIn, securityHeaders } from "./services/security-headers.server";
import { keepAnswer, keptAnswer } from "./services/change-feed.server";

/** For the production server (scripts/serve.mjs): a kept answer, looked up before React Router. */
export { keptAnswer };

/** The screens people open most, whose HTML is kept until the data behind it changes. */
const KEPT_SCREENS = new Set(["routes/site-overview", "routes/site-flags", "routes/site-fly-list"]);

function isKeptScreen(context: EntryContext): boolean {
  const matches = context.staticHandlerContext.matches;
  const leaf = matches[matches.length - 1]?.route.id;
  return !!leaf && KEPT_SCREENS.has(leaf) && !context.staticHandlerContext.errors;
}

/**
 * One of the kept screens, rendered whole (not streamed) and kept (see change-feed.server.ts):
 * scripts/serve.mjs sends the kept HTML, with a fresh nonce, until the data behind it changes.
 */
async function renderAndKeep(request: Request, headers: Headers, context: EntryContext, nonce: string): Promise<Response> {
  headers.set("Content-Type", "text/html; charset=utf-8");
  const { body, failed } = await new Promise<{ body: string; failed: boolean }>((resolve, reject) => {
    const sink = new PassThrough();
    const chunks: Buffer[] = [];
    let failed = false;
    sink.on("data", (c: Buffer) => chunks.push(c));
    sink.on("end", () => resolve({ body: Buffer.concat(chunks).toString("utf8"), failed }));
    sink.on("error", reject);
    const timer = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(<ServerRouter context={context} url={request.url} nonce={nonce} />, {
      nonce,
      onAllReady() {
        clearTimeout(timer);
        pipe(sink);
      },
      onShellError(error: unknown) {
        clearTimeout(timer);
        reject(error);
      },
      onError(error: unknown) {
        failed = true;
        console.error(error);
      },
    });
  });
  if (failed) return new Response(body, { status: 500, headers });
  await keepAnswer(request, 200, headers, body, nonce);
  return new Response(body, { status: 200, headers });
}

export const streamTimeout = 5_000;

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
) {
  const nonce = randomBytes(16).toString("base64");
  securityHeaders(responseHeaders, request, nonce);
  noStoreWhenSignedIn(responseHeaders, request);
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  if (responseStatusCode === 200 && !responseHeaders.has("Set-Cookie") && isKeptScreen(routerContext)) {
    return renderAndKeep(request, responseHeaders, routerContext, nonce);
  }

  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions =
      (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);

    const { pipe, abort } = renderToPipeableStream(<ServerRouter context={routerContext} url={request.url} nonce={nonce} />, {
      nonce,
      [readyOption]() {
        shellRendered = true;
        const body = new PassThrough({
          final(callback) {
            clearTimeout(timeoutId);
            timeoutId = undefined;
            callback();
          },
        });
        const stream = createReadableStreamFromReadable(body);
        responseHeaders.set("Content-Type", "text/html; charset=utf-8");
        pipe(body);
        resolve(new Response(stream, { headers: responseHeaders, status: responseStatusCode }));
      },
      onShellError(error: unknown) {
        reject(error);
      },
      onError(error: unknown) {
        responseStatusCode = 500;
        if (shellRendered) console.error(error);
      },
    });
  });
}

export const handleDataRequest: HandleDataRequestFunction = (response, { request }) => {
  securityHeaders(response.headers, request, null);
  noStoreWhenSignedIn(response.headers, request);
  return response;
};

export function handleError(error: unknown, { request }: { request: Request }) {
  if (request.signal.aborted) return;
  console.error(error);
}
