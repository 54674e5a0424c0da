/** What every `platen` command shares: its shape, its output channels, its exit codes. */
import { parseArgs, type ParseArgsConfig } from "node:util";

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

/**
 * Parses one command's arguments: the options given, and exactly one file (`what` names it in the
 * message, e.g. "scan file"). Wrong command lines become UsageError with one plain sentence;
 * with --help, `file` is "" and no file is required.
 */
export function parseFileArgs<const O extends ParseArgsConfig["options"]>(args: string[], options: O, what: { a: string; one: string }) {
  let parsed;
  try {
    parsed = parseArgs({ args, options, allowPositionals: true, strict: true });
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    const unknown = /Unknown option '([^']+)'/.exec(message);
    throw new UsageError(unknown ? `unknown option ${unknown[1]}` : message.replace(/\.$/, ""));
  }
  const { positionals, values } = parsed;
  if ((values as { help?: boolean }).help) return { file: "", values, help: true as boolean };
  if (positionals.length === 0) throw new UsageError(`expected the path of ${what.a}`);
  if (positionals.length > 1) {
    throw new UsageError(`expected one ${what.one} but received ${positionals.length} (${positionals.join(", ")})`);
  }
  return { file: positionals[0]!, values, help: false as boolean };
}
