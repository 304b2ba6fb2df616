/** API routes for reports. (placeholder until its owner fills it) */
import { Router } from 'express';
import type { AppContext } from '../context.js';

export default function reportsRoutes(_ctx: AppContext) {
  const r = Router();
  return r;
}
