import type { ReactNode } from 'react';

type PanelProps = {
  title?: ReactNode;
  titleId?: string;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
  as?: 'section' | 'div' | 'article';
};

/** The chamfered panel: the product's shape signature for any block of content. */
export function Panel({
  title,
  titleId,
  actions,
  children,
  className = '',
  as: Tag = 'section',
}: PanelProps) {
  return (
    <Tag
      className={`chamfer chamfer-lg p-5 sm:p-6 ${className}`}
      aria-labelledby={title && titleId ? titleId : undefined}
    >
      {title || actions ? (
        <div className="mb-4 flex flex-wrap items-center justify-between gap-3">
          {title ? (
            <h2 id={titleId} className="text-xl font-semibold tracking-wide text-graphite-50">
              {title}
            </h2>
          ) : (
            <span />
          )}
          {actions ? <div className="flex flex-wrap gap-2">{actions}</div> : null}
        </div>
      ) : null}
      {children}
    </Tag>
  );
}

type PageHeaderProps = { title: string; lead?: ReactNode; actions?: ReactNode };

export function PageHeader({ title, lead, actions }: PageHeaderProps) {
  return (
    <header className="mb-6 flex flex-wrap items-end justify-between gap-4">
      <div className="flex flex-col gap-2">
        <h1 className="text-3xl font-bold tracking-wide text-graphite-50 sm:text-4xl">{title}</h1>
        <div className="phase-rule" aria-hidden />
        {lead ? <p className="max-w-3xl text-lg text-graphite-300">{lead}</p> : null}
      </div>
      {actions ? <div className="flex flex-wrap gap-2">{actions}</div> : null}
    </header>
  );
}
