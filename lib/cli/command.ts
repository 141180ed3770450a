/** One CLI verb. `run` writes its output through `io` and returns the exit code. */
export interface CliIo {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
}

export interface CliCommand {
  name: string;
  /** One line for `help`. */
  summary: string;
  /** Full usage text for `help <command>`. */
  usage: string;
  run: (args: string[], io: CliIo) => Promise<number>;
}
