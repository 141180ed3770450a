import type { CliIo } from "./command";
import { COMMANDS } from "./registry";
import { toAppError } from "../errors/app-error";

function helpText(): string {
  const width = Math.max(...COMMANDS.map((c) => c.name.length), 4);
  const lines = COMMANDS.map((c) => `  ${c.name.padEnd(width)}  ${c.summary}`);
  return [
    "PhenoPool command line",
    "",
    "Usage: npm run --silent cli -- <command> [options]",
    "",
    "Commands:",
    `  ${"help".padEnd(width)}  Show this list, or the usage of one command (help <command>).`,
    ...lines,
    "",
  ].join("\n");
}

/** Dispatches argv (without node and script) to a command; returns the process exit code. */
export async function runCli(argv: string[], io: CliIo): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === "help" || name === "--help" || name === "-h") {
    const topic = rest[0];
    if (name === "help" && topic) {
      const command = COMMANDS.find((c) => c.name === topic);
      if (!command) {
        io.stderr(`Unknown command '${topic}'. Run 'help' for the list.\n`);
        return 2;
      }
      io.stdout(`${command.usage}\n`);
      return 0;
    }
    io.stdout(helpText());
    return 0;
  }
  const command = COMMANDS.find((c) => c.name === name);
  if (!command) {
    io.stderr(`Unknown command '${name}'. Run 'help' for the list.\n`);
    return 2;
  }
  try {
    return await command.run(rest, io);
  } catch (error) {
    const appError = toAppError(error);
    io.stderr(`${command.name}: ${appError.message}\n`);
    for (const fieldError of appError.fieldErrors) {
      const where = [fieldError.file, fieldError.row !== undefined ? `row ${fieldError.row}` : undefined, fieldError.field]
        .filter(Boolean)
        .join(", ");
      io.stderr(`  ${where}: ${fieldError.message}\n`);
    }
    return appError.code === "internal" ? 1 : 2;
  }
}
