import { api } from '@/lib/api';
import { CellResponse, type CreateCellRequest } from '@shared/schemas/cells';

/** POST /api/fields/:id/cells — used by the workspace's save loop (useOutlineSync). */
export async function createCell(fieldId: number, body: CreateCellRequest) {
  return (await api(`/fields/${fieldId}/cells`, { method: 'POST', body, schema: CellResponse })).cell;
}
