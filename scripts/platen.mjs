#!/usr/bin/env node
/**
 * The `platen` command (package.json "bin"). Loads tsx so the TypeScript sources run as they are,
 * without a build step, then hands the arguments to worker/cli/main.ts. Whatever goes wrong, the
 * person sees one line on stderr and an exit code, never a stack trace.
 */
import { register } from "tsx/esm/api";

register();

try {
  const { main } = await import("../worker/cli/main.ts");
  process.exitCode = await main(process.argv.slice(2));
} catch (err) {
  const message = err instanceof Error ? err.message : String(err);
  process.stderr.write(`platen: ${message.replace(/\s*\n\s*/g, "; ")}\n`);
  process.exitCode = 1;
}
