/** What every `platen` command shares: its shape, its output channels, its exit codes. */

export const EXIT_FAILED = 1;
export const EXIT_USAGE = 2;

export interface CliIo {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  env: NodeJS.ProcessEnv;
}

export interface Command {
  /** The word typed after `platen`. */
  name: string;
  /** The usage line after `platen `, e.g. "info <file> [--json]". */
  usage: string;
  /** One line for `platen --help`. */
  summary: string;
  /** Extra lines for `platen <name> --help`. */
  help: string[];
  /** Resolves to the exit code; throws UsageError for a wrong command line, other errors on failure. */
  run: (args: string[], io: CliIo) => Promise<number>;
}

/** The command line was wrong (exit 2), as opposed to the input being bad (exit 1). */
export class UsageError extends Error {
  override name = "UsageError";
}

/** Collapses a message to a single line, so every failure is exactly one line on stderr. */
export function oneLine(text: string): string {
  return text.replace(/\s*\n\s*/g, "; ").trim();
}

/** The `platen <name> --help` text of a command. */
export function commandHelp(command: Command): string {
  return [`Usage: platen ${command.usage}`, "", command.summary, ...command.help, ""].join("\n");
}
