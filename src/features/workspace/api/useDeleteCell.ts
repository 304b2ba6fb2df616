import { api } from '@/lib/api';
import { DeleteCellResponse } from '@shared/schemas/cells';

/** DELETE /api/cells/:id — soft when measurements refer to the cell. */
export async function deleteCell(cellId: number) {
  return api(`/cells/${cellId}`, { method: 'DELETE', schema: DeleteCellResponse });
}
