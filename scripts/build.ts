import path from "node:path";
import { fileURLToPath } from "node:url";
import { buildClient } from "./lib/build-client";

/** `npm run build`: builds the client beside the one being served, then serves the new one. */
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const { ok, dir } = buildClient(root);
if (!ok) {
  console.error("The client build failed; see above.");
  process.exit(1);
}
console.log(`Built the client into ${path.relative(root, dir)}; dist now points at it.`);
