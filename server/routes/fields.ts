/** API routes for fields. (placeholder until its owner fills it) */
import { Router } from 'express';
import type { AppContext } from '../context.js';

export default function fieldsRoutes(_ctx: AppContext) {
  const r = Router();
  return r;
}
