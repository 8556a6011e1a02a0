'use client';

import Link from 'next/link';
import { usePathname } from 'next/navigation';
import { cx } from '@/components/ui/cx';

export interface NavItem {
  href: string;
  label: string;
}

/** The main navigation; the entry of the current section is marked. */
export function NavLinks({ items }: { items: NavItem[] }) {
  const pathname = usePathname();
  return (
    <nav aria-label="Main" className="flex items-center gap-1 overflow-x-auto">
      {items.map((item) => {
        const active =
          item.href === '/' ? pathname === '/' : pathname === item.href || pathname.startsWith(`${item.href}/`);
        return (
          <Link
            key={item.href}
            href={item.href}
            aria-current={active ? 'page' : undefined}
            className={cx(
              'rounded-md px-2.5 py-1.5 text-small font-medium whitespace-nowrap transition-colors',
              active ? 'bg-lobe-50 text-lobe-800' : 'text-ink-600 hover:bg-ink-100 hover:text-ink-900',
            )}
          >
            {item.label}
          </Link>
        );
      })}
    </nav>
  );
}
