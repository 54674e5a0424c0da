import fs from "node:fs/promises";
import path from "node:path";
import S3rver from "s3rver";

/**
 * A local stand-in for S3 (the s3rver package): the real S3 API over HTTP on 127.0.0.1, objects
 * kept in a folder. `npm start` runs one in development when PLATEN_STORAGE=s3 has no endpoint;
 * the tests run their own. Its fixed credentials are S3RVER / S3RVER; clients use path-style URLs.
 */
export interface FakeS3 {
  endpoint: string;
  port: number;
  directory: string;
  /** Where the fake keeps the bytes of `bucket`/`key` on disk (tests tamper with it). */
  objectFile(bucket: string, key: string): string;
  stop(): Promise<void>;
}

export const FAKE_S3_CREDENTIALS = { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" } as const;

export async function startFakeS3(opts: { directory: string; buckets: string[]; port?: number }): Promise<FakeS3> {
  await fs.mkdir(opts.directory, { recursive: true });
  const server = new S3rver({
    address: "127.0.0.1",
    port: opts.port ?? 0,
    silent: true,
    directory: opts.directory,
    configureBuckets: opts.buckets.map((name) => ({ name, configs: [] })),
  });
  const address = await server.run();
  return {
    endpoint: `http://127.0.0.1:${address.port}`,
    port: address.port,
    directory: opts.directory,
    objectFile: (bucket, key) => {
      const parts = key.split("/");
      return path.join(opts.directory, bucket, ...parts.slice(0, -1), `${parts.at(-1)}._S3rver_object`);
    },
    stop: () => server.close(),
  };
}

/** The environment that points Platen's library (or its off-site copy) at a fake S3. */
export function fakeS3Env(fake: FakeS3, bucket: string, which: "S3" | "OFFSITE" = "S3"): Record<string, string> {
  return {
    ...(which === "S3" ? { PLATEN_STORAGE: "s3" } : {}),
    [`PLATEN_${which}_BUCKET`]: bucket,
    [`PLATEN_${which}_ENDPOINT`]: fake.endpoint,
    [`PLATEN_${which}_FORCE_PATH_STYLE`]: "1",
    [`PLATEN_${which}_REGION`]: "us-east-1",
    [`PLATEN_${which}_ACCESS_KEY_ID`]: FAKE_S3_CREDENTIALS.accessKeyId,
    [`PLATEN_${which}_SECRET_ACCESS_KEY`]: FAKE_S3_CREDENTIALS.secretAccessKey,
  };
}
