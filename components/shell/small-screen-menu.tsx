'use client';

import Link from 'next/link';
import { usePathname } from 'next/navigation';
import { type ReactNode, useEffect, useState } from 'react';
import { cx } from '@/components/ui/cx';
import type { NavItem } from './nav-links';

/**
 * Below the md breakpoint the navigation folds into this menu: a button in the header opens a panel with the same
 * entries (and the team switcher, passed as children). It closes on navigation and on Escape.
 */
export function SmallScreenMenu({ items, children }: { items: NavItem[]; children?: ReactNode }) {
  const [open, setOpen] = useState(false);
  const pathname = usePathname();
  // biome-ignore lint/correctness/useExhaustiveDependencies: close whenever the address changes
  useEffect(() => setOpen(false), [pathname]);
  useEffect(() => {
    if (!open) return;
    const onKey = (e: KeyboardEvent) => e.key === 'Escape' && setOpen(false);
    document.addEventListener('keydown', onKey);
    return () => document.removeEventListener('keydown', onKey);
  }, [open]);
  return (
    <div className="md:hidden">
      <button
        type="button"
        aria-expanded={open}
        aria-controls="small-screen-menu"
        onClick={() => setOpen((v) => !v)}
        className="flex h-9 items-center gap-1.5 rounded-md px-2.5 text-small font-medium text-ink-700 ring-1 ring-ink-200 ring-inset hover:bg-ink-50 focus-visible:outline-2 focus-visible:outline-lobe-500"
      >
        <svg viewBox="0 0 20 20" aria-hidden="true" className="size-4">
          {open ? (
            <path d="M5 5l10 10M15 5L5 15" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
          ) : (
            <path d="M3 6h14M3 10h14M3 14h14" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
          )}
        </svg>
        Menu
      </button>
      {open ? (
        <div
          id="small-screen-menu"
          className="absolute inset-x-0 top-14 z-30 border-b border-ink-200 bg-white px-4 pt-2 pb-4 shadow-lg"
        >
          <nav aria-label="Main">
            <ul className="divide-y divide-ink-100">
              {items.map((item) => {
                const active =
                  item.href === '/' ? pathname === '/' : pathname === item.href || pathname.startsWith(`${item.href}/`);
                return (
                  <li key={item.href}>
                    <Link
                      href={item.href}
                      aria-current={active ? 'page' : undefined}
                      className={cx(
                        'block px-2 py-3 text-body font-medium',
                        active ? 'text-lobe-800' : 'text-ink-700 hover:text-ink-900',
                      )}
                    >
                      {item.label}
                    </Link>
                  </li>
                );
              })}
            </ul>
          </nav>
          {children ? <div className="mt-3 border-t border-ink-100 pt-3">{children}</div> : null}
        </div>
      ) : null}
    </div>
  );
}
