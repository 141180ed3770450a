/**
 * Cross-site request forgery check for requests that change state. A browser request is
 * accepted when Sec-Fetch-Site says same-origin (or none: typed by the user), or, for browsers
 * that do not send it, when Origin matches the host. Requests with a bearer token are not sent
 * by browsers on their own, so they pass. Everything else is refused.
 */
export interface OriginHeaders {
  method: string;
  host: string | null;
  origin: string | null;
  secFetchSite: string | null;
  authorization: string | null;
}

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

export function isSameOriginRequest(headers: OriginHeaders): boolean {
  if (SAFE_METHODS.has(headers.method.toUpperCase())) return true;
  if (headers.authorization && /^Bearer\s+\S+$/i.test(headers.authorization)) return true;
  if (headers.secFetchSite) return headers.secFetchSite === "same-origin" || headers.secFetchSite === "none";
  if (headers.origin && headers.host) {
    try {
      return new URL(headers.origin).host === headers.host;
    } catch {
      return false;
    }
  }
  // No browser metadata at all: a non-browser client (curl, scripts) without cookies' ambient authority.
  return headers.origin === null;
}
