import "server-only";
import {
  CreateBucketCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  NoSuchKey,
  PutObjectCommand,
  S3Client,
  S3ServiceException,
} from "@aws-sdk/client-s3";
import { env } from "@/lib/env";
import { AppError } from "@/lib/errors";

/**
 * Object storage: uploaded measured data, images and the trajectories of
 * large simulation runs, in one S3-compatible bucket. Keys are chosen by the
 * callers (db rows hold them); nothing here decides who may read what.
 */

// One client per server process, kept on globalThis across development reloads.
const globalForStorage = globalThis as unknown as { holonomyS3?: S3Client };

function client(): S3Client {
  globalForStorage.holonomyS3 ??= new S3Client({
    endpoint: env.S3_ENDPOINT,
    region: env.S3_REGION,
    credentials: { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY },
    // Buckets as a path segment: the local fake and most self-hosted stores have no per-bucket host names.
    forcePathStyle: true,
    // Checksums only where the protocol needs them; S3-compatible stores differ in which newer checksums they accept.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
  return globalForStorage.holonomyS3;
}

/** Any storage failure becomes a 503 the client can retry; the detail goes to the log only. */
function unavailable(operation: string, error: unknown): AppError {
  console.error(`[holonomy] object storage ${operation} failed:`, error instanceof Error ? error.message : error);
  return new AppError("unavailable:storage", "File storage is not reachable right now. Try again in a moment.", { cause: error });
}

export async function putObject({ key, body, contentType }: { key: string; body: Uint8Array; contentType: string }): Promise<void> {
  try {
    await client().send(new PutObjectCommand({ Bucket: env.S3_BUCKET, Key: key, Body: body, ContentType: contentType, ContentLength: body.byteLength }));
  } catch (error) {
    throw unavailable("upload", error);
  }
}

export interface StoredObject {
  body: ReadableStream<Uint8Array>;
  contentLength: number | null;
}

/** Streams an object; null when the key does not exist. */
export async function getObjectStream({ key }: { key: string }): Promise<StoredObject | null> {
  try {
    const response = await client().send(new GetObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
    if (!response.Body) return null;
    return { body: response.Body.transformToWebStream() as ReadableStream<Uint8Array>, contentLength: response.ContentLength ?? null };
  } catch (error) {
    if (isMissing(error)) return null;
    throw unavailable("download", error);
  }
}

/** Reads a whole object into memory (CSV text for a fit, a stored trajectory); null when missing. */
export async function getObjectBytes({ key }: { key: string }): Promise<Uint8Array | null> {
  try {
    const response = await client().send(new GetObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
    return response.Body ? await response.Body.transformToByteArray() : null;
  } catch (error) {
    if (isMissing(error)) return null;
    throw unavailable("download", error);
  }
}

/** Deletes an object; deleting a missing key is not an error (S3 semantics). */
export async function deleteObject({ key }: { key: string }): Promise<void> {
  try {
    await client().send(new DeleteObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
  } catch (error) {
    if (isMissing(error)) return;
    throw unavailable("delete", error);
  }
}

/** True when the object exists (tests use it to prove nothing was stored). */
export async function objectExists({ key }: { key: string }): Promise<boolean> {
  try {
    await client().send(new HeadObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
    return true;
  } catch (error) {
    if (isMissing(error)) return false;
    throw unavailable("look-up", error);
  }
}

/** Keys under a prefix (at most `limit`), e.g. everything stored for one derivation. */
export async function listObjectKeys({ prefix, limit = 1000 }: { prefix: string; limit?: number }): Promise<string[]> {
  try {
    const response = await client().send(new ListObjectsV2Command({ Bucket: env.S3_BUCKET, Prefix: prefix, MaxKeys: limit }));
    return (response.Contents ?? []).flatMap((item) => (item.Key ? [item.Key] : []));
  } catch (error) {
    throw unavailable("listing", error);
  }
}

export interface ObjectSummary {
  key: string;
  size: number;
}

/**
 * Every object in the bucket, page by page (backups walk the whole bucket;
 * `listObjectKeys` stops at one page).
 */
export async function* listAllObjects(): AsyncGenerator<ObjectSummary> {
  let token: string | undefined;
  do {
    let response;
    try {
      response = await client().send(new ListObjectsV2Command({ Bucket: env.S3_BUCKET, ContinuationToken: token }));
    } catch (error) {
      throw unavailable("listing", error);
    }
    for (const item of response.Contents ?? []) if (item.Key) yield { key: item.Key, size: item.Size ?? 0 };
    token = response.IsTruncated ? response.NextContinuationToken : undefined;
  } while (token);
}

/** An object's bytes with its content type (backups keep both); null when missing. */
export async function getObjectRecord({ key }: { key: string }): Promise<{ body: Uint8Array; contentType: string } | null> {
  try {
    const response = await client().send(new GetObjectCommand({ Bucket: env.S3_BUCKET, Key: key }));
    if (!response.Body) return null;
    return { body: await response.Body.transformToByteArray(), contentType: response.ContentType ?? "application/octet-stream" };
  } catch (error) {
    if (isMissing(error)) return null;
    throw unavailable("download", error);
  }
}

/** Creates the bucket when it does not exist yet (restoring into a fresh store). */
export async function ensureBucket(): Promise<void> {
  try {
    await client().send(new HeadBucketCommand({ Bucket: env.S3_BUCKET }));
    return;
  } catch (error) {
    if (!isMissing(error)) throw unavailable("bucket look-up", error);
  }
  try {
    await client().send(new CreateBucketCommand({ Bucket: env.S3_BUCKET }));
  } catch (error) {
    throw unavailable("bucket creation", error);
  }
}

function isMissing(error: unknown): boolean {
  if (error instanceof NoSuchKey) return true;
  return error instanceof S3ServiceException && (error.name === "NoSuchKey" || error.name === "NotFound" || error.$metadata.httpStatusCode === 404);
}
