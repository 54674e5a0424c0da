/**
 * The `platen` command line: a small table of commands, each with its own usage line and runner.
 * Exit codes: 0 done, 1 the input was bad or the work failed, 2 the command line itself was wrong.
 * Every failure is exactly one line on stderr, with no stack trace.
 * To add a command, write a module exporting a `Command` and list it in COMMANDS.
 */
import { infoCommand } from "./info";
import { renderCommand } from "./render";
import { splitCommand } from "./split";
import { EXIT_FAILED, EXIT_USAGE, UsageError, oneLine, type CliIo, type Command } from "./command";

export type { CliIo, Command } from "./command";

const COMMANDS: readonly Command[] = [infoCommand, splitCommand, renderCommand];

function helpText(): string {
  const width = Math.max(...COMMANDS.map((c) => c.usage.length));
  return [
    "platen — scanner-side tools for the studio's scans",
    "",
    "Usage: platen <command> [options]",
    "",
    "Commands:",
    ...COMMANDS.map((c) => `  ${c.usage.padEnd(width)}  ${c.summary}`),
    "",
    "Run platen <command> --help for one command's options.",
    "Limits come from the environment: PLATEN_DEFAULT_DPI, PLATEN_MAX_PIXELS.",
    "",
  ].join("\n");
}

const processIo: CliIo = {
  stdout: (text) => process.stdout.write(text),
  stderr: (text) => process.stderr.write(text),
  env: process.env,
};

/**
 * Runs one command line and returns its exit code (the caller sets process.exitCode).
 * Example: await main(["info", "scan.tif", "--json"]) → 0, with the scan's header as JSON on stdout.
 */
export async function main(argv: readonly string[], io: CliIo = processIo): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined) {
    io.stderr("platen: expected a command. Run platen --help to see the commands.\n");
    return EXIT_USAGE;
  }
  if (name === "--help" || name === "-h" || name === "help") {
    io.stdout(helpText());
    return 0;
  }
  const command = COMMANDS.find((c) => c.name === name);
  if (!command) {
    const known = COMMANDS.map((c) => c.name).join(", ");
    io.stderr(`platen: unknown command "${oneLine(name)}" (the commands are: ${known}). Run platen --help to see them.\n`);
    return EXIT_USAGE;
  }
  try {
    return await command.run(rest, io);
  } catch (err) {
    if (err instanceof UsageError) {
      io.stderr(`platen ${command.name}: ${oneLine(err.message)}. Usage: platen ${command.usage}\n`);
      return EXIT_USAGE;
    }
    const message = err instanceof Error ? err.message : String(err);
    io.stderr(`platen ${command.name}: ${oneLine(message)}\n`);
    return EXIT_FAILED;
  }
}
