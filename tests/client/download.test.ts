// @vitest-environment jsdom
/** downloadFile: a refused download shows the server's message instead of saving it as a file. (common practice) */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { ApiError, downloadFile } from '../../src/lib/api';

afterEach(() => vi.unstubAllGlobals());

describe('downloadFile', () => {
  it('throws the server message of a refusal and saves nothing', async () => {
    const click = vi.spyOn(HTMLAnchorElement.prototype, 'click').mockImplementation(() => {});
    vi.stubGlobal('fetch', vi.fn(async () => new Response(JSON.stringify({ error: 'cells "A" and "B" overlap; one label image cannot hold both' }), { status: 409, headers: { 'content-type': 'application/json' } })));
    const p = downloadFile('/fields/1/cells/labels.tiff', 'f-labels.tiff');
    await expect(p).rejects.toBeInstanceOf(ApiError);
    await expect(p).rejects.toThrow('cells "A" and "B" overlap; one label image cannot hold both');
    expect(click).not.toHaveBeenCalled();
    click.mockRestore();
  });

  it('saves a file answer under the name the server gives', async () => {
    let saved = '';
    const click = vi.spyOn(HTMLAnchorElement.prototype, 'click').mockImplementation(function (this: HTMLAnchorElement) {
      saved = this.download;
    });
    vi.stubGlobal('URL', Object.assign(URL, { createObjectURL: () => 'blob:x', revokeObjectURL: () => {} }));
    vi.stubGlobal('fetch', vi.fn(async () => new Response(new Uint8Array([73, 73, 42, 0]), { status: 200, headers: { 'content-disposition': 'attachment; filename="Field 1-labels.tiff"' } })));
    await downloadFile('/fields/1/cells/labels.tiff', 'fallback.tiff');
    expect(click).toHaveBeenCalledTimes(1);
    expect(saved).toBe('Field 1-labels.tiff');
    click.mockRestore();
  });
});
