import { useEffect, useId, useRef, type ReactNode } from 'react';

type DialogProps = {
  open: boolean;
  title: string;
  description?: ReactNode;
  onClose: () => void;
  children: ReactNode;
  wide?: boolean;
};

/**
 * A modal on the native <dialog>: the browser traps focus, Escape closes it, and focus returns to the
 * control that opened it.
 */
export function Dialog({ open, title, description, onClose, children, wide = false }: DialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  const descriptionId = useId();

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) dialog.showModal();
    if (!open && dialog.open) dialog.close();
  }, [open]);

  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      aria-describedby={description ? descriptionId : undefined}
      onClose={onClose}
      onCancel={(event) => {
        event.preventDefault();
        onClose();
      }}
      className={`chamfer chamfer-lg m-auto max-h-[92dvh] w-[calc(100%-2rem)] overflow-visible bg-transparent p-0 text-graphite-100 [--ch-edge:var(--color-copper-600)] [--ch-fill:var(--color-graphite-850)] ${wide ? 'max-w-3xl' : 'max-w-xl'}`}
    >
      {open ? (
        <div className="flex max-h-[92dvh] flex-col overflow-y-auto p-6 pb-8">
          <div className="mb-5 flex items-start justify-between gap-4">
            <div className="flex flex-col gap-2">
              <h2 id={titleId} className="text-2xl font-bold tracking-wide text-graphite-50">
                {title}
              </h2>
              <div className="phase-rule" aria-hidden />
              {description ? (
                <p id={descriptionId} className="text-graphite-300">
                  {description}
                </p>
              ) : null}
            </div>
            <button
              type="button"
              onClick={onClose}
              className="inline-flex size-target shrink-0 items-center justify-center text-2xl text-graphite-300 hover:bg-graphite-750 hover:text-white"
              aria-label="Close"
            >
              <svg width="18" height="18" viewBox="0 0 18 18" aria-hidden>
                <path d="M2 2 16 16M16 2 2 16" stroke="currentColor" strokeWidth="2.5" />
              </svg>
            </button>
          </div>
          {children}
        </div>
      ) : null}
    </dialog>
  );
}
