/**
 * Real local stand-ins for the distributed path, on loopback: Debian's `redis-server` (child process, random
 * port, no persistence) and `s3rver` (in-process, random port, temp folder). `.ci/run` installs redis-server.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';

export const hasRedis = spawnSync('redis-server', ['--version'], { stdio: 'ignore' }).status === 0;
export const NO_REDIS_MESSAGE = 'SKIPPED: redis-server is not installed (apt-get install redis-server; .ci/run installs it)';

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const p = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(p));
    });
  });
}

export async function startRedis(): Promise<{ url: string; stop(): Promise<void> }> {
  const port = await freePort();
  const child = spawn('redis-server', ['--port', String(port), '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'], { stdio: ['ignore', 'pipe', 'pipe'] });
  await new Promise<void>((resolve, reject) => {
    let out = '';
    const t = setTimeout(() => reject(new Error(`redis-server did not start: ${out}`)), 10_000);
    child.stdout!.on('data', (d) => {
      out += d;
      if (/Ready to accept connections/i.test(out)) {
        clearTimeout(t);
        resolve();
      }
    });
    child.once('exit', (code) => reject(new Error(`redis-server exited ${code}: ${out}`)));
  });
  return {
    url: `redis://127.0.0.1:${port}`,
    stop: () => stopChild(child),
  };
}

export async function stopChild(child: ChildProcess, signal: NodeJS.Signals = 'SIGTERM') {
  if (child.exitCode !== null || child.signalCode !== null) return;
  await new Promise<void>((resolve) => {
    const t = setTimeout(() => {
      child.kill('SIGKILL');
    }, 5000);
    child.once('exit', () => {
      clearTimeout(t);
      resolve();
    });
    child.kill(signal);
  });
}

export async function startS3(bucket = 'syntopy'): Promise<{ endpoint: string; stop(): Promise<void> }> {
  const name = 's3rver'; // untyped package
  const { default: S3rver } = (await import(name)) as unknown as { default: new (o: object) => { run(): Promise<{ port: number }>; close(): Promise<void> } };
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-s3-'));
  const port = await freePort();
  const s = new S3rver({ address: '127.0.0.1', port, silent: true, directory, configureBuckets: [{ name: bucket, configs: [] }] });
  await s.run();
  // s3rver accepts any well-formed signature with these (its documented defaults)
  process.env.AWS_ACCESS_KEY_ID ??= 'S3RVER';
  process.env.AWS_SECRET_ACCESS_KEY ??= 'S3RVER';
  process.env.AWS_REGION ??= 'us-east-1';
  return {
    endpoint: `http://127.0.0.1:${port}`,
    async stop() {
      await s.close();
      fs.rmSync(directory, { recursive: true, force: true });
    },
  };
}
