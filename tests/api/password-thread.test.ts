/**
 * Passwords are hashed and checked in worker threads (server/auth/passwords.ts): the hashes are ordinary bcrypt
 * (checked by bcryptjs on this thread), sign-in still works, a burst of sign-ins all succeed, and the event loop
 * answers other requests while they are hashed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import bcrypt from 'bcryptjs';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { DUMMY_HASH, hashPassword, verifyPassword } from '../../server/auth/passwords.js';
import passwordTask from '../../server/auth/password-worker.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(() => t.close());

describe('password hashing off the event loop', () => {
  it('a thread-made hash is a standard bcrypt hash of the password (bcryptjs on this thread agrees)', async () => {
    const h = await hashPassword('a long passphrase');
    expect(h).toMatch(/^\$2[aby]\$\d\d\$/);
    expect(bcrypt.compareSync('a long passphrase', h)).toBe(true);
    expect(bcrypt.compareSync('another passphrase', h)).toBe(false);
    expect(await verifyPassword('a long passphrase', h)).toBe(true);
    expect(await verifyPassword('another passphrase', h)).toBe(false);
    // an account without a password never matches, not even the dummy hash's own password
    expect(await verifyPassword('no-such-user-password', null)).toBe(false);
    expect(bcrypt.compareSync('no-such-user-password', DUMMY_HASH)).toBe(true);
  });

  it('the worker task itself hashes and verifies (the same function the threads run)', () => {
    const h = passwordTask({ op: 'hash', password: 'pw one', rounds: 4 }) as string;
    expect(passwordTask({ op: 'verify', password: 'pw one', hash: h })).toBe(true);
    expect(passwordTask({ op: 'verify', password: 'pw two', hash: h })).toBe(false);
  });

  it('sign-in works, and 20 sign-ins at once all succeed while /api/health keeps answering', async () => {
    const one = await request(t.app).post('/api/auth/login').send({ email: 'biologist@test.example', password: TEST_PASSWORD });
    expect(one.status).toBe(200);
    const wrong = await request(t.app).post('/api/auth/login').send({ email: 'manager@test.example', password: 'not the password' });
    expect(wrong.status).toBe(401);
    const logins = Array.from({ length: 20 }, () => request(t.app).post('/api/auth/login').send({ email: 'microscopist@test.example', password: TEST_PASSWORD }));
    const health = await request(t.app).get('/api/health');
    expect(health.status).toBe(200);
    for (const res of await Promise.all(logins)) expect(res.status).toBe(200);
  });
});
