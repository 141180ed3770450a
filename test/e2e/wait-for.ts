/** Polls `probe` every 250 ms until it returns a value other than null; throws after `timeoutMs`, naming `what`. */
export async function waitFor<T>(what: string, probe: () => Promise<T | null>, timeoutMs = 90_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value !== null) return value;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}
