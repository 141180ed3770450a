import { afterEach, describe, expect, it } from "vitest";
import { migrateDatabase, readMigrations } from "@/lib/db/migrate";
import { createEmptyDatabase, testProviders } from "@/test/helpers/test-databases";

const providers = await testProviders();
const cleanups: Array<() => Promise<void>> = [];
afterEach(async () => {
  while (cleanups.length) await cleanups.pop()!();
});

describe.each(providers)("migrations on %s", (provider) => {
  it("create the schema on an empty database, and a second run is a no-op", async () => {
    const { url, dropRaw } = await createEmptyDatabase(provider);
    cleanups.push(dropRaw);
    const all = readMigrations(provider).map((m) => m.name);
    expect(all.length).toBeGreaterThan(0);
    const first = await migrateDatabase(url);
    expect(first.applied).toEqual(all);
    const second = await migrateDatabase(url);
    expect(second.applied).toEqual([]);
    expect(second.alreadyApplied).toEqual(all);
  });
});
