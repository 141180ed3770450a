export type DatabaseProvider = "sqlite" | "postgresql";

/** Which database a URL names: postgres:// and postgresql:// are PostgreSQL, file: is SQLite. */
export function providerOf(url: string): DatabaseProvider {
  if (/^postgres(ql)?:\/\//.test(url)) return "postgresql";
  if (url.startsWith("file:")) return "sqlite";
  throw new Error(`Unsupported database URL '${redactUrl(url)}': use file:PATH or postgresql://...`);
}

/** The file path of a SQLite URL (file:./data/x.db -> ./data/x.db). */
export function sqlitePath(url: string): string {
  return url.replace(/^file:/, "");
}

/** A URL safe to print: the password, if any, replaced. */
export function redactUrl(url: string): string {
  return url.replace(/\/\/([^:/@]+):([^@]+)@/, "//$1:***@");
}
