import Link, { type LinkProps } from 'next/link';
import type { ReactNode } from 'react';
import { type ButtonSize, type ButtonVariant, buttonClass } from './button';

export interface LinkButtonProps extends LinkProps {
  variant?: ButtonVariant;
  size?: ButtonSize;
  className?: string;
  children: ReactNode;
  'data-testid'?: string;
}

/** A link styled as a button. */
export function LinkButton({ variant = 'primary', size = 'md', className, children, ...rest }: LinkButtonProps) {
  return (
    <Link className={buttonClass(variant, size, className)} {...rest}>
      {children}
    </Link>
  );
}
