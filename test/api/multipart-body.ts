/**
 * multipart/form-data bodies framed by hand, as RFC 7578 section 4 lays them out (after RFC 2046
 * section 5.1.1): each part opens with "--" and the boundary, then its header lines
 * (Content-Disposition: form-data; name="..."[; filename="..."], optionally Content-Type), an
 * empty line and its content; a CRLF before the next "--boundary"; "--boundary--" closes the body.
 * Built independently of the parser under test, and streamed in chunks so a large body is never
 * held whole.
 */
export const TEST_BOUNDARY = "PhenoPoolTestBoundary7578x";

export type FormPart =
  | { name: string; value: string }
  | { name: string; fileName: string; content: Uint8Array | string | (() => AsyncIterable<Uint8Array>); contentType?: string };

const encoder = new TextEncoder();

export async function* multipartChunks(parts: readonly FormPart[], boundary = TEST_BOUNDARY, closing = true): AsyncGenerator<Uint8Array> {
  for (const part of parts) {
    const disposition = "fileName" in part ? `form-data; name="${part.name}"; filename="${part.fileName}"` : `form-data; name="${part.name}"`;
    const type = "fileName" in part ? `Content-Type: ${part.contentType ?? "text/csv"}\r\n` : "";
    yield encoder.encode(`--${boundary}\r\nContent-Disposition: ${disposition}\r\n${type}\r\n`);
    if ("value" in part) yield encoder.encode(part.value);
    else if (typeof part.content === "string") yield encoder.encode(part.content);
    else if (part.content instanceof Uint8Array) yield part.content;
    else yield* part.content();
    yield encoder.encode("\r\n");
  }
  if (closing) yield encoder.encode(`--${boundary}--\r\n`);
}

/** An async iterable of chunks as a request body stream; `failAfter` bytes makes it break off like a client that went away. */
export function bodyStream(chunks: AsyncIterable<Uint8Array>, failAfter?: number): ReadableStream<Uint8Array> {
  const iterator = chunks[Symbol.asyncIterator]();
  let sent = 0;
  return new ReadableStream({
    async pull(controller) {
      if (failAfter !== undefined && sent >= failAfter) return controller.error(new Error("the client went away"));
      const next = await iterator.next();
      if (next.done) return controller.close();
      sent += next.value.byteLength;
      controller.enqueue(next.value);
    },
  });
}

export const multipartType = (boundary = TEST_BOUNDARY) => `multipart/form-data; boundary=${boundary}`;

/** A POST with a streamed multipart body (no Content-Length, as a chunked upload). */
export function multipartRequest(parts: readonly FormPart[], options: { boundary?: string; closing?: boolean; failAfter?: number } = {}): Request {
  return new Request("http://localhost/api/v1/submissions", {
    method: "POST",
    headers: { "content-type": multipartType(options.boundary) },
    body: bodyStream(multipartChunks(parts, options.boundary, options.closing), options.failAfter),
    duplex: "half",
  } as RequestInit);
}
