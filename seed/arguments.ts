/** The command-line options of `npm run seed`. */
import { AppError } from "../lib/errors/app-error";
import { DEFAULT_DEMO_SEED } from "./simulate";
import { DEFAULT_TRUTH_PATH } from "./truth";
import { DEFAULT_ACCOUNTS_PATH } from "./accounts";

export const SEED_USAGE = `Usage: npm run seed [-- options]

Loads the demo network (invented sites, simulated birds) into DATABASE_URL
(default: the embedded SQLite file), after bringing its schema up to date.

Options:
  --seed N        Simulation seed, a whole number >= 0 (default ${DEFAULT_DEMO_SEED}); the same seed gives the same data.
  --force         Delete everything in a database that already holds sites, then load.
  --if-empty      Load only into an empty database; otherwise say so and exit 0.
  --truth FILE    Where to write the simulation's true parameters (default ${DEFAULT_TRUTH_PATH}).
  --accounts      Print the demo accounts and passwords of the last load, and exit.
  --accounts-file FILE  Where the demo accounts and passwords are kept (default ${DEFAULT_ACCOUNTS_PATH}).
  --help          Show this text.
`;

export interface SeedArguments {
  seed: number;
  force: boolean;
  ifEmpty: boolean;
  truthPath: string;
  accountsPath: string;
  showAccounts: boolean;
  help: boolean;
}

export function parseSeedArguments(argv: readonly string[]): SeedArguments {
  const parsed: SeedArguments = { seed: DEFAULT_DEMO_SEED, force: false, ifEmpty: false, truthPath: DEFAULT_TRUTH_PATH, accountsPath: DEFAULT_ACCOUNTS_PATH, showAccounts: false, help: false };
  const valueOf = (i: number, flag: string): string => {
    const value = argv[i + 1];
    if (value === undefined || value.startsWith("--")) throw new AppError("invalid_input", `${flag} needs a value`, [{ field: flag, message: "missing value" }]);
    return value;
  };
  for (let i = 0; i < argv.length; i += 1) {
    const [flag, inline] = argv[i]!.split(/=(.*)/s, 2) as [string, string | undefined];
    const take = () => inline ?? valueOf(i++, flag);
    if (flag === "--seed") {
      const text = take();
      const seed = Number(text);
      if (!/^\d+$/.test(text) || !Number.isSafeInteger(seed)) {
        throw new AppError("invalid_input", `--seed must be a whole number >= 0, got '${text}'`, [{ field: "--seed", message: "not a whole number >= 0", value: text }]);
      }
      parsed.seed = seed;
    } else if (flag === "--truth") parsed.truthPath = take();
    else if (flag === "--accounts-file") parsed.accountsPath = take();
    else if (flag === "--force") parsed.force = true;
    else if (flag === "--if-empty") parsed.ifEmpty = true;
    else if (flag === "--accounts") parsed.showAccounts = true;
    else if (flag === "--help" || flag === "-h") parsed.help = true;
    else throw new AppError("invalid_input", `unknown option '${argv[i]}' (see --help)`, [{ field: argv[i]!, message: "unknown option" }]);
  }
  return parsed;
}
