/** The workspace's keys in one list, opened with `?` or the toolbar's "Keys" button. */
import { Dialog } from '@/components';
import { FAST_FACTOR } from '../lib/keyCursor';
import { TOOLS } from './ToolBar';

type Row = [keys: string[], what: string];

/** Every key the workspace answers to; the tool keys come from the toolbar's own list. */
export const SHORTCUT_GROUPS: { title: string; rows: Row[] }[] = [
  {
    title: 'Outline tools',
    rows: [...TOOLS.map((t): Row => [[t.key], `${t.label}: ${t.hint}`]), [['M'], 'new outlines mark a background region (on / off)']],
  },
  {
    title: 'Drawing from the keyboard (with a tool other than Select, the image focused)',
    rows: [
      [['←', '↑', '→', '↓'], 'show and move the keyboard cursor'],
      [['Shift', '+ arrow'], `move the cursor ${FAST_FACTOR} times as far`],
      [['Enter'], 'place a point (polygon), a corner (box, ellipse), or start / close a trace'],
      [['Shift', '+ Enter'], 'close the polygon (Enter on its first point does too)'],
      [['Backspace'], 'remove the last polygon point'],
      [['Esc'], 'cancel the outline being drawn; with none, clear the selection'],
    ],
  },
  {
    title: 'Editing',
    rows: [
      [['←', '↑', '→', '↓'], 'with Select: move the selected outline by one pixel (Shift: ten)'],
      [['Delete'], 'with Select: delete the selected outline'],
      [['Ctrl', '+ Z'], 'undo'],
      [['Ctrl', '+ Shift + Z'], 'redo (also Ctrl + Y)'],
      [['F2'], 'in the Cells list: rename the focused cell (Enter on a selected cell too)'],
      [['↑', '↓'], 'in the Cells list: select the previous or next cell'],
    ],
  },
  {
    title: 'View',
    rows: [
      [['+'], 'zoom in'],
      [['−'], 'zoom out'],
      [['0'], 'fit the image to the viewer'],
      [['1'], 'one image pixel per screen pixel'],
      [['Space', '+ drag'], 'pan (dragging empty space with Select, or the middle button, pans too)'],
      [['?'], 'this list'],
    ],
  },
];

export function ShortcutHelp({ open, onClose }: { open: boolean; onClose: () => void }) {
  return (
    <Dialog open={open} onClose={onClose} title="Keys in the workspace" width="lg">
      <div className="grid gap-5 sm:grid-cols-2" data-testid="shortcut-help">
        {SHORTCUT_GROUPS.map((g) => (
          <section key={g.title}>
            <h3 className="mb-1.5 text-sm font-semibold">{g.title}</h3>
            <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
              {g.rows.map(([keys, what]) => (
                <div key={`${keys.join(' ')} ${what}`} className="contents">
                  <dt className="whitespace-nowrap">
                    {keys.map((k) =>
                      k.startsWith('+ ') ? (
                        <span key={k} className="ml-1">
                          + <kbd className="rounded border border-ink/20 bg-white px-1 font-mono text-xs">{k.slice(2)}</kbd>
                        </span>
                      ) : (
                        <kbd key={k} className="mr-0.5 rounded border border-ink/20 bg-white px-1 font-mono text-xs">
                          {k}
                        </kbd>
                      ),
                    )}
                  </dt>
                  <dd className="text-ink-soft">{what}</dd>
                </div>
              ))}
            </dl>
          </section>
        ))}
      </div>
    </Dialog>
  );
}
