/** A keyboard shortcut shown on a button, e.g. F8; the button names it too with aria-keyshortcuts. */
export function Kbd({ children }: { children: string }) {
  return (
    <kbd className="ml-1 inline-flex min-w-8 items-center justify-center border border-current/50 px-1.5 py-0.5 font-mono text-sm leading-none font-semibold opacity-90">
      {children}
    </kbd>
  );
}
