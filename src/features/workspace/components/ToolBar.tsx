/** The outline tools and history buttons above the image. Every tool has a one-letter key. */
import { cx } from '@/components';
import type { Tool } from './Viewer';

export const TOOLS: { tool: Tool; label: string; key: string; hint: string }[] = [
  { tool: 'select', label: 'Select', key: 'V', hint: 'select, move, drag corners; double-click an edge adds a point, Shift-click a point removes it' },
  { tool: 'box', label: 'Box', key: 'B', hint: 'drag from corner to corner' },
  { tool: 'ellipse', label: 'Ellipse', key: 'E', hint: 'drag the box the ellipse fits in' },
  { tool: 'polygon', label: 'Polygon', key: 'P', hint: 'click the corners; click the first point, double-click or Enter closes' },
  { tool: 'trace', label: 'Trace', key: 'T', hint: 'hold the button and trace around the cell' },
];

export function ToolBar({
  tool,
  onTool,
  canEdit,
  canUndo,
  canRedo,
  onUndo,
  onRedo,
  background,
  onBackground,
  status,
  statusTitle,
  onHelp,
}: {
  tool: Tool;
  onTool: (t: Tool) => void;
  canEdit: boolean;
  canUndo: boolean;
  canRedo: boolean;
  onUndo: () => void;
  onRedo: () => void;
  background: boolean;
  onBackground: (b: boolean) => void;
  status: React.ReactNode;
  /** the whole status in words, for the tooltip when a long message is cut */
  statusTitle?: string;
  /** opens the list of keys (also `?`) */
  onHelp: () => void;
}) {
  const btn = (active: boolean) => cx('rounded px-2.5 py-1 text-xs font-medium focus-visible:outline-2 focus-visible:outline-accent', active ? 'bg-accent text-white' : 'text-ink hover:bg-ink/8');
  return (
    <div className="flex flex-wrap items-center gap-2" role="toolbar" aria-label="Outline tools">
      <div className="inline-flex rounded-md border border-ink/15 bg-white p-0.5">
        {TOOLS.filter((t) => canEdit || t.tool === 'select').map((t) => (
          <button key={t.tool} type="button" className={btn(tool === t.tool)} aria-pressed={tool === t.tool} title={`${t.label} (${t.key}): ${t.hint}`} onClick={() => onTool(t.tool)}>
            {t.label} <kbd className="ml-0.5 font-mono text-[10px] opacity-60">{t.key}</kbd>
          </button>
        ))}
      </div>
      {canEdit && (
        <>
          <label className="inline-flex items-center gap-1.5 rounded-md border border-ink/15 bg-white px-2 py-1 text-xs" title="New outlines mark a background region (used for background subtraction) (M)">
            <input type="checkbox" checked={background} onChange={(e) => onBackground(e.target.checked)} className="accent-warn" />
            New outlines mark background <kbd className="font-mono text-[10px] opacity-60">M</kbd>
          </label>
          <div className="inline-flex rounded-md border border-ink/15 bg-white p-0.5">
            <button type="button" className={btn(false)} disabled={!canUndo} onClick={onUndo} title="Undo (Ctrl+Z)" aria-label="Undo">
              ↶ Undo
            </button>
            <button type="button" className={btn(false)} disabled={!canRedo} onClick={onRedo} title="Redo (Ctrl+Shift+Z or Ctrl+Y)" aria-label="Redo">
              ↷ Redo
            </button>
          </div>
        </>
      )}
      <button type="button" className={cx(btn(false), 'border border-ink/15 bg-white')} onClick={onHelp} title="Every key of the workspace (?)" aria-keyshortcuts="Shift+?">
        Keys <kbd className="ml-0.5 font-mono text-[10px] opacity-60">?</kbd>
      </button>
      {/* a fixed box: the save messages change while drawing, and a message of another length must not re-wrap the
          toolbar and move the image under the pointer */}
      <div className="ml-auto h-5 w-48 shrink-0 truncate text-right text-xs leading-5 text-ink-soft" aria-live="polite" data-testid="save-status" title={statusTitle}>
        {status}
      </div>
    </div>
  );
}
