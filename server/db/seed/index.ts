/** TEMPORARY minimal seed (foundation work replaces it with the full invented demo study). */
import type { AppContext } from '../../context.js';
import { users } from '../schema.js';
import { hashPassword } from '../../auth/passwords.js';

export async function seedDemoIfEmpty(ctx: AppContext) {
  if (ctx.db.select().from(users).limit(1).all().length) return;
  const hash = await hashPassword('syntopy-demo');
  ctx.db.insert(users).values({ email: 'manager@demo.test', name: 'Demo Manager', passwordHash: hash, roles: ['facility_manager'] }).run();
}
