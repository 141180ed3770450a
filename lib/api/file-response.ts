/** A download: `body` with its media type, offered under `fileName`. */
export function fileResponse(body: string | Uint8Array, mediaType: string, fileName: string): Response {
  const safeName = fileName.replace(/[^A-Za-z0-9._-]/g, "_");
  return new Response(body as BodyInit, {
    status: 200,
    headers: { "content-type": mediaType, "content-disposition": `attachment; filename="${safeName}"`, "cache-control": "no-store" },
  });
}

export const csvResponse = (csv: string, fileName: string) => fileResponse(csv, "text/csv; charset=utf-8", fileName);
