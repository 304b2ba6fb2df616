/**
 * A checked number box: the typed text is read by a shared NumberText schema (so the box refuses exactly what
 * the request's schema refuses); a refused text stays in the box with its message tied to it
 * (aria-invalid, aria-describedby, role="alert") and the owner keeps its last valid value. When the owner's
 * value changes from outside, the box shows it unless the text already reads as that number.
 *
 *   const box = useNumberBox({ schema: SEED, value, onChange });
 *   <input className={inputClass(!!box.error)} {...box.input} />
 *   <BoxMessage box={box} className="text-xs text-danger" />
 */
import { useEffect, useId, useState, type ChangeEvent } from 'react';
import { NumberText, readNumberText } from '@shared/schemas/common';

type Schema = ReturnType<typeof NumberText>;

export type NumberBoxOptions =
  | { schema: Schema; value: number; onChange: (n: number) => void; emptyIsNull?: false }
  /** empty text is a valid "no value": onChange(null), no message */
  | { schema: Schema; value: number | null; onChange: (n: number | null) => void; emptyIsNull: true };

export interface NumberBox {
  error: string | null;
  messageId: string;
  input: {
    value: string;
    'aria-invalid': boolean;
    'aria-describedby': string | undefined;
    onChange: (e: ChangeEvent<HTMLInputElement>) => void;
  };
}

/** the text's number without bounds: whether the box already shows `value` */
const ANY_NUMBER = NumberText('value');
const textOf = (v: number | null) => (v === null ? '' : String(v));

export function useNumberBox(o: NumberBoxOptions): NumberBox {
  const { value, emptyIsNull } = o;
  const [text, setText] = useState(textOf(value));
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    setText((t) => ((t.trim() === '' ? emptyIsNull && value === null : readNumberText(ANY_NUMBER, t).value === value) ? t : textOf(value)));
  }, [value, emptyIsNull]);
  const messageId = useId();
  return {
    error,
    messageId,
    input: {
      value: text,
      'aria-invalid': !!error,
      'aria-describedby': error ? messageId : undefined,
      onChange: (e) => {
        const typed = e.target.value;
        setText(typed);
        if (o.emptyIsNull && typed.trim() === '') {
          setError(null);
          o.onChange(null);
          return;
        }
        const r = readNumberText(o.schema, typed);
        setError(r.error);
        if (r.value !== null) o.onChange(r.value);
      },
    },
  };
}

/** The box's message (nothing while the text is valid), as a block `p` or, inside inline content, a `span`. */
export function BoxMessage({ box, className, as: Tag = 'p' }: { box: NumberBox; className?: string; as?: 'p' | 'span' }) {
  if (!box.error) return null;
  return (
    <Tag id={box.messageId} role="alert" className={className}>
      {box.error}
    </Tag>
  );
}
