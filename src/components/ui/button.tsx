import type { ButtonHTMLAttributes, ReactNode } from 'react';
import { Link, type LinkProps } from 'react-router';

export type ButtonVariant = 'primary' | 'secondary' | 'danger' | 'quiet';
export type ButtonSize = 'md' | 'lg';

const base =
  'chamfer chamfer-sm inline-flex min-h-target items-center justify-center gap-2 px-5 font-semibold tracking-wide ' +
  'select-none no-underline transition-[color] disabled:cursor-not-allowed disabled:opacity-55';

const variants: Record<ButtonVariant, string> = {
  primary:
    'text-graphite-950 [--ch-fill:var(--color-copper-400)] [--ch-edge:var(--color-copper-200)] ' +
    'hover:[--ch-fill:var(--color-copper-300)] hover:text-graphite-950 active:[--ch-fill:var(--color-copper-500)]',
  secondary:
    'text-graphite-50 [--ch-fill:var(--color-graphite-800)] [--ch-edge:var(--color-graphite-500)] ' +
    'hover:[--ch-fill:var(--color-graphite-750)] hover:[--ch-edge:var(--color-copper-400)] hover:text-graphite-50',
  danger:
    'text-white [--ch-fill:#9c3a2c] [--ch-edge:var(--color-fault)] hover:[--ch-fill:#b44433] hover:text-white',
  quiet:
    'text-copper-200 [--ch-fill:transparent] [--ch-edge:transparent] hover:[--ch-fill:var(--color-graphite-800)] hover:text-copper-100',
};

const sizes: Record<ButtonSize, string> = {
  md: 'text-base',
  lg: 'min-h-14 px-7 text-lg',
};

export function buttonClass(
  variant: ButtonVariant = 'secondary',
  size: ButtonSize = 'md',
  extra = '',
): string {
  return `${base} ${variants[variant]} ${sizes[size]} ${extra}`;
}

type ButtonProps = ButtonHTMLAttributes<HTMLButtonElement> & {
  variant?: ButtonVariant;
  size?: ButtonSize;
  busy?: boolean;
  children: ReactNode;
};

/** A button; `busy` keeps its width, announces the wait and refuses a second press. */
export function Button({
  variant = 'secondary',
  size = 'md',
  busy = false,
  className = '',
  children,
  type = 'button',
  disabled,
  ...rest
}: ButtonProps) {
  return (
    <button
      type={type}
      className={buttonClass(variant, size, className)}
      disabled={disabled || busy}
      aria-busy={busy || undefined}
      {...rest}
    >
      {busy ? (
        <span
          aria-hidden
          className="inline-block size-4 animate-spin border-2 border-current border-t-transparent"
        />
      ) : null}
      {children}
    </button>
  );
}

type LinkButtonProps = LinkProps & { variant?: ButtonVariant; size?: ButtonSize };

export function LinkButton({ variant = 'secondary', size = 'md', className = '', ...rest }: LinkButtonProps) {
  return (
    <Link className={buttonClass(variant, size, typeof className === 'string' ? className : '')} {...rest} />
  );
}
