/** Starts Syntopy: validate configuration, open and migrate the database, seed the demo, serve. */
import { loadEnv, ConfigError } from './env.js';
import { createContext, closeContext } from './context.js';
import { createApp } from './app.js';

async function main() {
  let env;
  try {
    env = loadEnv();
  } catch (e) {
    if (e instanceof ConfigError) {
      console.error(e.message);
      process.exit(1);
    }
    throw e;
  }
  const ctx = await createContext(env);
  // the run pool's threads start while the rest starts up, so the first run does not wait for them
  ctx.runs.warm?.().catch((e: Error) => console.warn(`[runs] the pool threads could not start: ${e.message}`));
  await (await import('./recover.js')).recoverAfterCrash(ctx); // leftovers of an unclean stop
  if (env.SEED_DEMO === 'auto') {
    const { seedDemoIfNeeded } = await import('./db/seed/index.js');
    await seedDemoIfNeeded(ctx, { startRun: true });
  }
  await ctx.runs.resume();
  const app = createApp(ctx);
  const server = app.listen(env.PORT, env.HOST, () => {
    const addr = server.address();
    const port = typeof addr === 'object' && addr ? addr.port : env.PORT;
    console.log(`Syntopy is listening on http://localhost:${port} (data in ${env.DATA_DIR})`);
  });
  const stop = async () => {
    server.close();
    await closeContext(ctx);
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((e) => {
  console.error(`Syntopy could not start: ${e instanceof Error ? e.message : String(e)}`);
  process.exit(1);
});
