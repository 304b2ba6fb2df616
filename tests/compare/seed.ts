/**
 * Test helper: builds conditions, coverslips, fields, cells and measurements directly in the database
 * (these tests only need measurement rows, not runs). Values are deterministic from a seeded generator.
 */
import type { AppContext } from '../../server/context.js';
import { Xoshiro128 } from '../../shared/analysis/prng.js';

export interface SeedSpec {
  studyId: number;
  userId: number;
  /** condition name → coverslips → number of cells */
  conditions: { name: string; coverslips: number[]; pearson: number }[];
  seed?: number;
}

export interface Seeded {
  recipeId: number;
  runId: number;
  conditionIds: number[];
  coverslipIds: number[][];
  fieldIds: number[];
  cellIds: number[];
}

export function seedMeasurements(ctx: AppContext, spec: SeedSpec): Seeded {
  const db = ctx.db.$client;
  const rng = new Xoshiro128(spec.seed ?? 5);
  const normal = () => Math.sqrt(-2 * Math.log(1 - rng.nextFloat())) * Math.cos(2 * Math.PI * rng.nextFloat());
  const out: Seeded = { recipeId: 0, runId: 0, conditionIds: [], coverslipIds: [], fieldIds: [], cellIds: [] };
  db.transaction(() => {
    db.prepare("INSERT OR IGNORE INTO files (sha256, size, store_key, original_name) VALUES ('0000', 1, 'k', 'x.tif')").run();
    const recipe = db.prepare("INSERT INTO recipes (name, version, status, settings) VALUES ('Test recipe', 1, 'approved', '{}') RETURNING id").get() as { id: number };
    db.prepare('UPDATE recipes SET family_id = id WHERE id = ?').run(recipe.id);
    out.recipeId = recipe.id;
    const run = db.prepare("INSERT INTO runs (study_id, recipe_id, scope_kind, scope_id, status) VALUES (?, ?, 'study', ?, 'done') RETURNING id").get(spec.studyId, recipe.id, spec.studyId) as { id: number };
    out.runId = run.id;
    const insCond = db.prepare('INSERT INTO conditions (study_id, name, position) VALUES (?, ?, ?) RETURNING id');
    const insSlip = db.prepare('INSERT INTO coverslips (condition_id, name, replicate, position) VALUES (?, ?, ?, ?) RETURNING id');
    const insField = db.prepare(
      `INSERT INTO fields (coverslip_id, name, file1_sha, file2_sha, channel_names, file_size, width, height, bit_depth, sample_format, facts)
       VALUES (?, ?, '0000', '0000', '[null,null]', 1, 64, 64, 16, 'uint', '{}') RETURNING id`,
    );
    const insCell = db.prepare("INSERT INTO cells (field_id, name, geometry, pixel_count) VALUES (?, ?, '{\"kind\":\"rect\",\"x\":0,\"y\":0,\"width\":4,\"height\":4}', 16) RETURNING id");
    const insM = db.prepare(
      `INSERT INTO measurements (run_id, cell_id, field_id, pixels, pearson, spearman, manders_m1, manders_m2, mean1, mean2, saturated_fraction1, saturated_fraction2, provenance)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, '{}')`,
    );
    spec.conditions.forEach((c, ci) => {
      const condId = (insCond.get(spec.studyId, c.name, ci + 10) as { id: number }).id;
      out.conditionIds.push(condId);
      out.coverslipIds.push([]);
      c.coverslips.forEach((nCells, si) => {
        const slipId = (insSlip.get(condId, `${c.name} CS${si + 1}`, si + 1, si) as { id: number }).id;
        out.coverslipIds[ci].push(slipId);
        const fieldId = (insField.get(slipId, `${c.name}-${si + 1}-f1`) as { id: number }).id;
        out.fieldIds.push(fieldId);
        const slipEffect = 0.05 * normal();
        for (let k = 0; k < nCells; k++) {
          const cellId = (insCell.get(fieldId, `cell ${k + 1}`) as { id: number }).id;
          out.cellIds.push(cellId);
          const r = Math.max(-0.99, Math.min(0.99, c.pearson + slipEffect + 0.08 * normal()));
          insM.run(run.id, cellId, fieldId, 100 + k, r, r * 0.9, 0.5 + r / 3, 0.4 + r / 4, 1000 + 100 * normal(), 800 + 50 * ci, k === 0 ? 0.01 : 0, 0);
        }
      });
    });
  })();
  return out;
}
