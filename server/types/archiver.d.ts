// archiver 8 ships no types and the community ones describe the older API; this covers what we use.
declare module "archiver" {
  import type { Readable, Writable } from "node:stream";
  export class ZipArchive extends Readable {
    constructor(options?: { zlib?: { level?: number }; store?: boolean });
    file(path: string, data: { name: string }): this;
    append(source: string | Buffer | Readable, data: { name: string }): this;
    finalize(): Promise<void>;
    pipe<T extends Writable>(destination: T): T;
    abort(): this;
    pointer(): number;
  }
}
