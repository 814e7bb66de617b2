/** S3 driver (any S3-compatible service) behind the same ObjectStore interface. */
import {
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  NoSuchKey,
  PutObjectCommand,
  S3Client,
  S3ServiceException,
} from "@aws-sdk/client-s3";
import { Readable } from "node:stream";
import { assertSafeKey, ObjectNotFoundError, type ObjectStore } from "./ObjectStore.ts";

export interface S3StoreOptions {
  bucket: string;
  region: string;
  endpoint: string | null;
  accessKeyId: string | null;
  secretAccessKey: string | null;
  forcePathStyle: boolean;
  /** Prepended to every key, e.g. "tidemark/". */
  prefix: string;
  /** Keys per ListObjectsV2 page (S3's default and maximum: 1000); tests lower it to see paging. */
  listPageSize?: number;
}

export function createS3Store(options: S3StoreOptions): ObjectStore {
  const client = new S3Client({
    region: options.region,
    ...(options.endpoint ? { endpoint: options.endpoint } : {}),
    forcePathStyle: options.forcePathStyle,
    ...(options.accessKeyId && options.secretAccessKey
      ? { credentials: { accessKeyId: options.accessKeyId, secretAccessKey: options.secretAccessKey } }
      : {}),
    // Plain Content-MD5-free uploads of small buffers; S3-compatible services vary in checksum support.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
  const { bucket, prefix } = options;
  const full = (key: string): string => {
    assertSafeKey(key);
    return prefix + key;
  };
  const isNotFound = (e: unknown): boolean =>
    e instanceof NoSuchKey || (e instanceof S3ServiceException && e.$metadata.httpStatusCode === 404);

  return {
    async put(key, body, contentType) {
      await client.send(new PutObjectCommand({ Bucket: bucket, Key: full(key), Body: body, ContentType: contentType }));
    },
    async get(key, range) {
      try {
        // The range goes to S3 as is (GetObject's Range, RFC 9110 §14.1.2 syntax), so only those bytes travel.
        const Range = range ? `bytes=${range.start}-${range.end}` : undefined;
        const out = await client.send(new GetObjectCommand({ Bucket: bucket, Key: full(key), Range }));
        if (!(out.Body instanceof Readable)) throw new Error(`S3 returned no readable body for ${key}`);
        return out.Body;
      } catch (e) {
        if (isNotFound(e)) throw new ObjectNotFoundError(key);
        throw e;
      }
    },
    async size(key) {
      try {
        const out = await client.send(new HeadObjectCommand({ Bucket: bucket, Key: full(key) }));
        if (out.ContentLength === undefined) throw new Error(`S3 gave no length for ${key}`);
        return out.ContentLength;
      } catch (e) {
        if (isNotFound(e)) throw new ObjectNotFoundError(key);
        throw e;
      }
    },
    async delete(key) {
      await client.send(new DeleteObjectCommand({ Bucket: bucket, Key: full(key) }));
    },
    async *list(keyPrefix) {
      let token: string | undefined;
      do {
        const page = await client.send(
          new ListObjectsV2Command({ Bucket: bucket, Prefix: prefix + keyPrefix, ContinuationToken: token, MaxKeys: options.listPageSize }),
        );
        for (const item of page.Contents ?? []) {
          if (!item.Key) continue;
          yield { key: item.Key.slice(prefix.length), lastModified: item.LastModified ?? new Date(0) };
        }
        token = page.IsTruncated ? page.NextContinuationToken : undefined;
      } while (token);
    },
  };
}
