/** API routes for runs. (placeholder until its owner fills it) */
import { Router } from 'express';
import type { AppContext } from '../context.js';

export default function runsRoutes(_ctx: AppContext) {
  const r = Router();
  return r;
}
