import { readdirSync, statSync } from "node:fs";
import { join, relative, sep } from "node:path";
import { pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
import { API_ROUTES } from "@/lib/api/routes";
import { buildOpenApiDocument } from "@/lib/api/openapi";

/**
 * No route can be forgotten: every app/api/v1/.../route.ts on disk, with each HTTP method it
 * exports, is in the route registry and in the OpenAPI document, and every registry entry has its
 * file and method on disk.
 */
const HTTP_METHODS = ["GET", "POST", "PUT", "PATCH", "DELETE", "HEAD", "OPTIONS"] as const;
const API_ROOT = join(process.cwd(), "app", "api", "v1");

function routeFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    if (statSync(path).isDirectory()) return routeFiles(path);
    return name === "route.ts" ? [path] : [];
  });
}

/** app/api/v1/sites/[code]/route.ts -> /api/v1/sites/{code} */
function urlPathOf(file: string): string {
  const folders = relative(join(process.cwd(), "app"), file).split(sep).slice(0, -1);
  return `/${folders.map((segment) => segment.replace(/^\[(.+)\]$/, "{$1}")).join("/")}`;
}

const onDisk = await Promise.all(
  routeFiles(API_ROOT).map(async (file) => {
    const module = (await import(pathToFileURL(file).href)) as Record<string, unknown>;
    return { file, path: urlPathOf(file), methods: HTTP_METHODS.filter((m) => typeof module[m] === "function") };
  }),
);
const operations = onDisk.flatMap(({ path, methods }) => methods.map((method) => `${method} ${path}`)).sort();
const registered = API_ROUTES.map((route) => `${route.method} ${route.path}`).sort();

describe("the API's routes on disk, in the registry and in the OpenAPI document", () => {
  it("finds route files, each exporting at least one method", () => {
    expect(onDisk.length).toBeGreaterThanOrEqual(15);
    for (const { file, methods } of onDisk) expect(methods, file).not.toEqual([]);
  });

  it("lists exactly the operations the route files export", () => {
    expect(registered).toEqual(operations);
  });

  it("has each operation once in the registry, with a unique operationId", () => {
    expect(new Set(registered).size).toBe(registered.length);
    const ids = API_ROUTES.map((route) => route.operationId);
    expect(new Set(ids).size).toBe(ids.length);
  });

  it("documents every operation on disk in the OpenAPI document", () => {
    const document = buildOpenApiDocument();
    const documented = Object.entries(document.paths)
      .flatMap(([path, item]) => Object.keys(item).map((method) => `${method.toUpperCase()} ${path}`))
      .sort();
    expect(documented).toEqual(operations);
  });

  it("resolves every schema reference of the OpenAPI document to one of its components", () => {
    const document = buildOpenApiDocument();
    const refs: string[] = [];
    const walk = (value: unknown): void => {
      if (Array.isArray(value)) value.forEach(walk);
      else if (value && typeof value === "object") {
        for (const [key, inner] of Object.entries(value)) {
          if (key === "$ref") refs.push(String(inner));
          else walk(inner);
        }
      }
    };
    walk(document);
    expect(refs.length).toBeGreaterThan(20);
    for (const ref of new Set(refs)) {
      expect(ref).toMatch(/^#\/components\/schemas\//);
      expect(document.components.schemas, ref).toHaveProperty(ref.replace("#/components/schemas/", ""));
    }
  });

  it("names each path parameter of a route in its path and its params schema alike", () => {
    for (const route of API_ROUTES) {
      const inPath = [...route.path.matchAll(/\{([^}]+)\}/g)].map((m) => m[1]).sort();
      const inSchema = Object.keys(route.params?.shape ?? {}).sort();
      expect(inSchema, route.path).toEqual(inPath);
    }
  });
});
