import { api } from '@/lib/api';
import { CellResponse, type UpdateCellRequest } from '@shared/schemas/cells';

/** PATCH /api/cells/:id — rename, role, new geometry. A measured cell answers with a new id (see the route). */
export async function updateCell(cellId: number, body: UpdateCellRequest) {
  return (await api(`/cells/${cellId}`, { method: 'PATCH', body, schema: CellResponse })).cell;
}
