'use client';

import type { ReactNode } from 'react';
import { Button } from './button';
import { cx } from './cx';
import { EmptyState } from './empty-state';
import { LoadingBlock } from './loading-block';

export interface DataTableColumn<Row> {
  /** Column key; also the sort key sent to the server when `sortable`. */
  key: string;
  header: ReactNode;
  render: (row: Row) => ReactNode;
  sortable?: boolean;
  align?: 'left' | 'right' | 'center';
  /** Extra classes for the cells of this column (e.g. `font-mono`, widths). */
  className?: string;
}

export type SortDirection = 'asc' | 'desc';

export interface DataTableProps<Row> {
  columns: DataTableColumn<Row>[];
  rows: Row[];
  rowKey: (row: Row) => string | number;
  /** Current sort (server-side); clicking a sortable header calls onSortChange. */
  sort?: { key: string; direction: SortDirection };
  onSortChange?: (sort: { key: string; direction: SortDirection }) => void;
  /** Server paging: 1-based page, page size and the total number of rows matching the filter. */
  page?: number;
  pageSize?: number;
  total?: number;
  onPageChange?: (page: number) => void;
  isLoading?: boolean;
  /** Shown when there are no rows and nothing is loading. */
  empty?: ReactNode;
  caption?: string;
  onRowClick?: (row: Row) => void;
  'data-testid'?: string;
}

const alignClass = (a: DataTableColumn<unknown>['align']) =>
  a === 'right' ? 'text-right' : a === 'center' ? 'text-center' : 'text-left';

/** A table whose sorting and paging happen on the server: it only shows `rows` and reports clicks. */
export function DataTable<Row>({
  columns,
  rows,
  rowKey,
  sort,
  onSortChange,
  page = 1,
  pageSize,
  total,
  onPageChange,
  isLoading,
  empty,
  caption,
  onRowClick,
  ...rest
}: DataTableProps<Row>) {
  const pages = pageSize && total !== undefined ? Math.max(1, Math.ceil(total / pageSize)) : 1;
  const first = total === 0 || !pageSize ? 0 : (page - 1) * pageSize + 1;
  const last = pageSize && total !== undefined ? Math.min(total, page * pageSize) : rows.length;

  function toggleSort(key: string) {
    if (!onSortChange) return;
    const direction: SortDirection = sort?.key === key && sort.direction === 'asc' ? 'desc' : 'asc';
    onSortChange({ key, direction });
  }

  return (
    <div data-testid={rest['data-testid']}>
      <div className="overflow-x-auto">
        <table className="min-w-full border-separate border-spacing-0 text-small">
          {caption ? <caption className="sr-only">{caption}</caption> : null}
          <thead>
            <tr>
              {columns.map((c) => {
                const active = sort?.key === c.key;
                const ariaSort = active ? (sort?.direction === 'asc' ? 'ascending' : 'descending') : undefined;
                return (
                  <th
                    key={c.key}
                    scope="col"
                    aria-sort={c.sortable ? (ariaSort ?? 'none') : undefined}
                    className={cx(
                      'border-b border-ink-200 bg-ink-50 px-3 py-2 text-micro font-semibold tracking-wide text-ink-600 uppercase',
                      alignClass(c.align),
                      c.className,
                    )}
                  >
                    {c.sortable && onSortChange ? (
                      <button
                        type="button"
                        onClick={() => toggleSort(c.key)}
                        className="inline-flex items-center gap-1 uppercase hover:text-ink-900"
                      >
                        {c.header}
                        <span aria-hidden="true" className={active ? 'text-lobe-700' : 'text-ink-300'}>
                          {active && sort?.direction === 'desc' ? '▾' : '▴'}
                        </span>
                      </button>
                    ) : (
                      c.header
                    )}
                  </th>
                );
              })}
            </tr>
          </thead>
          <tbody className={isLoading && rows.length ? 'opacity-60' : undefined}>
            {rows.map((row) => (
              <tr
                key={rowKey(row)}
                onClick={onRowClick ? () => onRowClick(row) : undefined}
                className={cx('hover:bg-ink-50/70', onRowClick && 'cursor-pointer')}
              >
                {columns.map((c) => (
                  <td
                    key={c.key}
                    className={cx('border-b border-ink-100 px-3 py-2 text-ink-800', alignClass(c.align), c.className)}
                  >
                    {c.render(row)}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {isLoading && rows.length === 0 ? <LoadingBlock lines={4} /> : null}
      {!isLoading && rows.length === 0 ? (
        <div className="p-4">{empty ?? <EmptyState title="Nothing here yet" />}</div>
      ) : null}
      {onPageChange && pageSize && total !== undefined && total > 0 ? (
        <nav aria-label="Pages" className="flex items-center justify-between gap-3 px-3 py-2.5 text-small text-ink-600">
          <span>
            {first}–{last} of {total}
          </span>
          <span className="flex items-center gap-2">
            <Button variant="secondary" size="sm" disabled={page <= 1} onClick={() => onPageChange(page - 1)}>
              Previous
            </Button>
            <span aria-live="polite">
              Page {page} of {pages}
            </span>
            <Button variant="secondary" size="sm" disabled={page >= pages} onClick={() => onPageChange(page + 1)}>
              Next
            </Button>
          </span>
        </nav>
      ) : null}
    </div>
  );
}
