/**
 * A fresh app on a fresh migrated SQLite database in a temp folder, one per test file:
 *   const t = await makeTestApp(); afterAll(() => t.close());
 *   const agent = await t.login('microscopist');   // supertest agent carrying the session cookie
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { loadEnv } from '../../server/env.js';
import { createContext, closeContext, type AppContext } from '../../server/context.js';
import { createApp } from '../../server/app.js';
import { labs, labMembers, studies, conditions, coverslips, users, type Role } from '../../server/db/schema.js';
import { hashPassword } from '../../server/auth/passwords.js';

export const TEST_PASSWORD = 'correct horse battery';

export interface World {
  labA: number;
  labB: number;
  /** users by key: microscopist, manager, biologist, collaborator (lab A), outsider (biologist in lab B) */
  users: Record<'microscopist' | 'manager' | 'biologist' | 'collaborator' | 'outsider', { id: number; email: string }>;
  studyA: number;
  studyB: number;
  conditionA: number;
  coverslipA: number;
  coverslipB: number;
}

export interface TestApp {
  ctx: AppContext;
  app: ReturnType<typeof createApp>;
  dataDir: string;
  world: World;
  /** a supertest agent signed in as one of the world's users (or any e-mail + password) */
  login(who: keyof World['users'] | string, password?: string): Promise<ReturnType<typeof request.agent>>;
  close(): Promise<void>;
}

export async function makeTestApp(extraEnv: Record<string, string> = {}): Promise<TestApp> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-test-'));
  const env = loadEnv({ NODE_ENV: 'test', DATA_DIR: dataDir, SEED_DEMO: 'never', PORT: '0', ...extraEnv } as NodeJS.ProcessEnv);
  const ctx = await createContext(env);
  const app = createApp(ctx);
  const world = await seedWorld(ctx);
  return {
    ctx,
    app,
    dataDir,
    world,
    async login(who, password = TEST_PASSWORD) {
      const email = who in world.users ? world.users[who as keyof World['users']].email : who;
      const agent = request.agent(app);
      const res = await agent.post('/api/auth/login').send({ email, password });
      if (res.status !== 200) throw new Error(`login as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
      return agent;
    },
    async close() {
      await closeContext(ctx);
      fs.rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

/** Two labs; one user per role in lab A (collaborator added to study A only); a biologist in lab B. */
export async function seedWorld(ctx: AppContext): Promise<World> {
  const hash = await hashPassword(TEST_PASSWORD);
  const db = ctx.db;
  const labA = db.insert(labs).values({ name: 'Lab A' }).returning().get().id;
  const labB = db.insert(labs).values({ name: 'Lab B' }).returning().get().id;
  const mk = (key: string, roles: Role[], lab: number | null) => {
    const email = `${key}@test.example`;
    const u = db.insert(users).values({ email, name: key, passwordHash: hash, roles }).returning().get();
    if (lab) db.insert(labMembers).values({ labId: lab, userId: u.id }).run();
    return { id: u.id, email };
  };
  const u = {
    microscopist: mk('microscopist', ['microscopist'], labA),
    manager: mk('manager', ['facility_manager'], null),
    biologist: mk('biologist', ['biologist'], labA),
    collaborator: mk('collaborator', ['collaborator'], null),
    outsider: mk('outsider', ['biologist'], labB),
  };
  const studyA = db.insert(studies).values({ labId: labA, ownerId: u.biologist.id, name: 'Study A' }).returning().get().id;
  const studyB = db.insert(studies).values({ labId: labB, ownerId: u.outsider.id, name: 'Study B' }).returning().get().id;
  const { studyMembers } = await import('../../server/db/schema.js');
  db.insert(studyMembers).values({ studyId: studyA, userId: u.collaborator.id, access: 'read' }).run();
  const conditionA = db.insert(conditions).values({ studyId: studyA, name: 'control', position: 0 }).returning().get().id;
  const conditionB = db.insert(conditions).values({ studyId: studyB, name: 'other', position: 0 }).returning().get().id;
  const coverslipA = db.insert(coverslips).values({ conditionId: conditionA, name: 'CS1', replicate: 1 }).returning().get().id;
  const coverslipB = db.insert(coverslips).values({ conditionId: conditionB, name: 'CS1', replicate: 1 }).returning().get().id;
  return { labA, labB, users: u, studyA, studyB, conditionA, coverslipA, coverslipB };
}
