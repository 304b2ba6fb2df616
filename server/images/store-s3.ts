/**
 * S3-compatible object storage for the content-addressed file store (selected by STORE_URL=s3://bucket[/prefix];
 * S3_ENDPOINT points at a non-AWS service such as MinIO or s3rver, with path-style addressing).
 * Credentials and region come from the AWS SDK's usual sources (AWS_ACCESS_KEY_ID, AWS_SECRET_ACCESS_KEY,
 * AWS_REGION, shared config files, instance roles); region defaults to us-east-1.
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import {
  S3Client,
  HeadObjectCommand,
  PutObjectCommand,
  GetObjectCommand,
  DeleteObjectCommand,
  ListObjectsV2Command,
  CreateBucketCommand,
  HeadBucketCommand,
} from '@aws-sdk/client-s3';
import type { FileStore } from '../services.js';

const KEY_RE = /^[a-z0-9][a-z0-9._/-]*$/i;

export class S3FileStore implements FileStore {
  readonly kind = 's3' as const;
  constructor(
    readonly client: S3Client,
    readonly bucket: string,
    readonly prefix = '',
  ) {}

  /** s3://bucket or s3://bucket/some/prefix */
  static fromUrl(url: string, endpoint?: string): S3FileStore {
    const m = /^s3:\/\/([a-z0-9][a-z0-9.-]{1,61}[a-z0-9])(?:\/(.*))?$/.exec(url);
    if (!m) throw new Error(`STORE_URL must look like s3://bucket or s3://bucket/prefix, got ${JSON.stringify(url)}`);
    const prefix = (m[2] ?? '').replace(/^\/+|\/+$/g, '');
    const client = new S3Client({
      region: process.env.AWS_REGION ?? 'us-east-1',
      // plain bodies (no aws-chunked trailing checksums): understood by every S3-compatible service
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
      ...(endpoint ? { endpoint, forcePathStyle: true } : {}),
    });
    return new S3FileStore(client, m[1], prefix ? prefix + '/' : '');
  }

  private k(key: string) {
    if (!KEY_RE.test(key) || key.includes('..')) throw new Error(`invalid store key ${JSON.stringify(key)}`);
    return this.prefix + key;
  }

  /** Creates the bucket when it does not exist (deployment scripts and tests). */
  async ensureBucket() {
    try {
      await this.client.send(new HeadBucketCommand({ Bucket: this.bucket }));
    } catch {
      await this.client.send(new CreateBucketCommand({ Bucket: this.bucket }));
    }
  }

  async putFile(key: string, localPath: string) {
    const Key = this.k(key);
    if (!(await this.has(key))) {
      const { size } = await fsp.stat(localPath);
      await this.client.send(new PutObjectCommand({ Bucket: this.bucket, Key, Body: fs.createReadStream(localPath), ContentLength: size }));
    }
    await fsp.rm(localPath, { force: true });
  }

  async has(key: string) {
    try {
      await this.client.send(new HeadObjectCommand({ Bucket: this.bucket, Key: this.k(key) }));
      return true;
    } catch (e) {
      const err = e as { name?: string; $metadata?: { httpStatusCode?: number } };
      if (err.name === 'NotFound' || err.name === 'NoSuchKey' || err.$metadata?.httpStatusCode === 404) return false;
      throw e;
    }
  }

  async get(key: string): Promise<Buffer> {
    try {
      const res = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: this.k(key) }));
      const bytes = await res.Body!.transformToByteArray();
      return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    } catch (e) {
      const err = e as { name?: string };
      if (err.name === 'NoSuchKey' || err.name === 'NotFound') throw Object.assign(new Error(`stored file ${key} is missing from s3://${this.bucket}/${this.prefix}`), { code: 'ENOENT' });
      throw e;
    }
  }

  async delete(key: string) {
    await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: this.k(key) }));
  }

  async list() {
    const out: string[] = [];
    let token: string | undefined;
    do {
      const res = await this.client.send(new ListObjectsV2Command({ Bucket: this.bucket, Prefix: this.prefix || undefined, ContinuationToken: token }));
      for (const o of res.Contents ?? []) if (o.Key) out.push(o.Key.slice(this.prefix.length));
      token = res.IsTruncated ? res.NextContinuationToken : undefined;
    } while (token);
    return out;
  }
}
