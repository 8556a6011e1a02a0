// Lobeline's UI primitives. Import from '@/components/ui' or from the single file.
export { Badge, type BadgeTone } from './badge';
export { Button, type ButtonProps, type ButtonSize, type ButtonVariant, buttonClass } from './button';
export { ConfirmDialog, type ConfirmDialogProps } from './confirm-dialog';
export { cx } from './cx';
export { DataTable, type DataTableColumn, type DataTableProps, type SortDirection } from './data-table';
export { EmptyState } from './empty-state';
export { ErrorState } from './error-state';
export { Field, type FieldProps } from './field';
export { inputClass } from './input-class';
export { LinkButton } from './link-button';
export { LoadingBlock } from './loading-block';
export { PageHeader } from './page-header';
export { Panel } from './panel';
export { SafetyNotice } from './safety-notice';
