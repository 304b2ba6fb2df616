/** Buttons: one primary action per view, quiet secondary actions, a red one for irreversible steps. */
import type { ButtonHTMLAttributes, Ref } from 'react';
import { Link, type LinkProps } from 'react-router';
import { cx, focusRing } from '@/lib/cx';
import { Spinner } from './Spinner';

export type ButtonVariant = 'primary' | 'secondary' | 'ghost' | 'danger' | 'quietDanger';
export type ButtonSize = 'sm' | 'md';

const base = 'inline-flex items-center justify-center gap-1.5 rounded-md font-medium transition-colors disabled:cursor-not-allowed disabled:opacity-55 whitespace-nowrap';
const variants: Record<ButtonVariant, string> = {
  primary: 'bg-accent text-white hover:bg-accent-dark shadow-sm',
  secondary: 'border border-ink/20 bg-white text-ink hover:bg-ink/5',
  ghost: 'text-ink-soft hover:bg-ink/5 hover:text-ink',
  danger: 'bg-danger text-white hover:bg-danger/90 shadow-sm',
  /** a destructive action that opens a confirmation (the red button is inside the dialog) */
  quietDanger: 'text-danger hover:bg-danger-soft',
};
const sizes: Record<ButtonSize, string> = { sm: 'px-2.5 py-1 text-sm', md: 'px-3.5 py-2 text-sm' };

export function buttonClass(variant: ButtonVariant = 'secondary', size: ButtonSize = 'md', extra?: string) {
  return cx(base, variants[variant], sizes[size], focusRing, extra);
}

export type ButtonProps = ButtonHTMLAttributes<HTMLButtonElement> & {
  variant?: ButtonVariant;
  size?: ButtonSize;
  /** shows a spinner and disables the button */
  pending?: boolean;
  ref?: Ref<HTMLButtonElement>;
};

export function Button({ variant = 'secondary', size = 'md', pending = false, className, children, disabled, type = 'button', ...rest }: ButtonProps) {
  return (
    <button type={type} className={buttonClass(variant, size, className)} disabled={disabled || pending} aria-busy={pending || undefined} {...rest}>
      {pending && <Spinner size="sm" label="" />}
      {children}
    </button>
  );
}

/** A router link that looks like a button. */
export function ButtonLink({ variant = 'secondary', size = 'md', className, ...rest }: LinkProps & { variant?: ButtonVariant; size?: ButtonSize }) {
  return <Link className={buttonClass(variant, size, className)} {...rest} />;
}
