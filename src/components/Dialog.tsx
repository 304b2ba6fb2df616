/**
 * A modal dialog: labelled by its title, opens with focus on its first field, keeps keyboard focus inside,
 * Escape or the Close button closes it, and focus returns to what opened it.
 */
import { useEffect, useId, useRef, useState } from 'react';
import { createPortal } from 'react-dom';
import { Button } from './Button';
import { ErrorNotice } from './Caution';

const FIELDS = 'input:not([disabled]):not([type="hidden"]), select:not([disabled]), textarea:not([disabled])';
const FOCUSABLE = 'a[href], button:not([disabled]), input:not([disabled]), select:not([disabled]), textarea:not([disabled]), [tabindex]:not([tabindex="-1"])';

export type DialogProps = {
  open: boolean;
  onClose: () => void;
  title: string;
  description?: React.ReactNode;
  children?: React.ReactNode;
  footer?: React.ReactNode;
  /** role="alertdialog" for confirmations */
  alert?: boolean;
  width?: 'sm' | 'md' | 'lg';
};

export function Dialog({ open, onClose, title, description, children, footer, alert = false, width = 'md' }: DialogProps) {
  const titleId = useId();
  const descId = useId();
  const panel = useRef<HTMLDivElement>(null);
  const closeRef = useRef(onClose);
  closeRef.current = onClose;

  useEffect(() => {
    if (!open) return;
    const opener = document.activeElement as HTMLElement | null;
    const el = panel.current;
    // focus: a marked control, else the first field of the body, else its first control, else the footer's (never the
    // Close button in the title bar when there is something to fill in)
    const body = el?.querySelector<HTMLElement>('[data-dialog-body]');
    const first =
      el?.querySelector<HTMLElement>('[data-autofocus]') ??
      body?.querySelector<HTMLElement>(FIELDS) ??
      body?.querySelector<HTMLElement>(FOCUSABLE) ??
      el?.querySelector<HTMLElement>('[data-dialog-footer] button:not([disabled])') ??
      el?.querySelector<HTMLElement>(FOCUSABLE);
    (first ?? el)?.focus();
    const onKey = (e: KeyboardEvent) => {
      if (e.key === 'Escape') {
        e.stopPropagation();
        closeRef.current();
        return;
      }
      if (e.key !== 'Tab' || !el) return;
      const items = Array.from(el.querySelectorAll<HTMLElement>(FOCUSABLE));
      if (items.length === 0) {
        e.preventDefault();
        return;
      }
      const firstItem = items[0];
      const last = items[items.length - 1];
      if (e.shiftKey && document.activeElement === firstItem) {
        e.preventDefault();
        last.focus();
      } else if (!e.shiftKey && document.activeElement === last) {
        e.preventDefault();
        firstItem.focus();
      }
    };
    document.addEventListener('keydown', onKey, true);
    return () => {
      document.removeEventListener('keydown', onKey, true);
      if (opener && document.contains(opener)) opener.focus();
    };
  }, [open]);

  if (!open) return null;
  const widths = { sm: 'max-w-sm', md: 'max-w-lg', lg: 'max-w-3xl' };
  return createPortal(
    <div className="fixed inset-0 z-50 flex items-start justify-center overflow-y-auto bg-ink/35 p-4 pt-[10vh]" onMouseDown={(e) => e.target === e.currentTarget && onClose()}>
      <div
        ref={panel}
        role={alert ? 'alertdialog' : 'dialog'}
        aria-modal="true"
        aria-labelledby={titleId}
        aria-describedby={description ? descId : undefined}
        tabIndex={-1}
        className={`w-full ${widths[width]} rounded-lg border border-ink/10 bg-paper shadow-xl outline-none`}
      >
        <div className="flex items-start justify-between gap-4 border-b border-ink/10 px-5 py-3">
          <h2 id={titleId} className="text-base font-semibold">
            {title}
          </h2>
          <Button variant="ghost" size="sm" onClick={onClose} aria-label="Close">
            ✕
          </Button>
        </div>
        <div className="px-5 py-4" data-dialog-body>
          {description && (
            <div id={descId} className="mb-3 text-sm text-ink-soft">
              {description}
            </div>
          )}
          {children}
        </div>
        {footer && (
          <div className="flex justify-end gap-2 border-t border-ink/10 px-5 py-3" data-dialog-footer>
            {footer}
          </div>
        )}
      </div>
    </div>,
    document.body,
  );
}

export type FormDialogProps = Pick<DialogProps, 'open' | 'onClose' | 'title' | 'description' | 'children'> & {
  /** the primary button, which submits the form */
  submitLabel: string;
  pending: boolean;
  onSubmit: (e: React.FormEvent<HTMLFormElement>) => void;
  /** leave checking to the caller (the shared schema's messages) rather than the browser */
  noValidate?: boolean;
};

/** A dialog around one form: Cancel and the submit button in the footer, the fields stacked in the body. */
export function FormDialog({ open, onClose, title, description, submitLabel, pending, onSubmit, noValidate, children }: FormDialogProps) {
  const formId = useId();
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title={title}
      description={description}
      footer={
        <>
          <Button onClick={onClose}>Cancel</Button>
          <Button variant="primary" type="submit" form={formId} pending={pending}>
            {submitLabel}
          </Button>
        </>
      }
    >
      <form id={formId} onSubmit={onSubmit} noValidate={noValidate} className="flex flex-col gap-4">
        {children}
      </form>
    </Dialog>
  );
}

export type ConfirmDialogProps = {
  open: boolean;
  onClose: () => void;
  title: string;
  message: React.ReactNode;
  confirmLabel: string;
  /** may return a promise; the dialog stays open with a spinner until it settles, and shows a failure */
  onConfirm: () => unknown | Promise<unknown>;
  danger?: boolean;
};

/** Asks before an irreversible step. Focus starts on Cancel so Enter does not destroy by accident. */
export function ConfirmDialog({ open, onClose, title, message, confirmLabel, onConfirm, danger = true }: ConfirmDialogProps) {
  const [pending, setPending] = useState(false);
  const [error, setError] = useState<unknown>(null);
  useEffect(() => {
    if (open) setError(null);
  }, [open]);
  const confirm = async () => {
    setPending(true);
    setError(null);
    try {
      await onConfirm();
      onClose();
    } catch (e) {
      setError(e);
    } finally {
      setPending(false);
    }
  };
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title={title}
      alert
      width="sm"
      description={message}
      footer={
        <>
          <Button onClick={onClose} data-autofocus>
            Cancel
          </Button>
          <Button variant={danger ? 'danger' : 'primary'} onClick={confirm} pending={pending}>
            {confirmLabel}
          </Button>
        </>
      }
    >
      <ErrorNotice error={error} />
    </Dialog>
  );
}
