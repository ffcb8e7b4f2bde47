import { useState } from 'react';
import type { ModelView } from '#shared/schemas/models';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { Dialog } from '#src/components/ui/dialog';
import { Kbd } from '#src/components/ui/kbd';
import { useHotkeys } from '#src/lib/use-hotkeys';
import { useRegisterUnit } from '#src/lib/queries/units';

type RegisterUnitDialogProps = {
  serial: string | null;
  /** The models this station may measure; the unit must be one of them. */
  models: ModelView[];
  onClose: () => void;
  onRegistered: (serial: string) => void;
};

/** Registers an unknown serial against a model: one big button per model, or its number key. */
export function RegisterUnitDialog({ serial, models, onClose, onRegistered }: RegisterUnitDialogProps) {
  const register = useRegisterUnit();
  const [error, setError] = useState<string | null>(null);
  const open = serial !== null;

  const choose = (model: ModelView) => {
    if (!serial || register.isPending) return;
    setError(null);
    register.mutate(
      { serial, modelId: model.id },
      {
        onSuccess: (unit) => onRegistered(unit.serial),
        onError: (e) => setError(e.message),
      },
    );
  };

  // The number keys choose a model while the dialog is open (it is itself the open dialog).
  useHotkeys(Object.fromEntries(models.map((m, i) => [String(i + 1), () => choose(m)])), {
    enabled: open,
    inDialog: true,
  });

  return (
    <Dialog
      open={open}
      onClose={onClose}
      title={`Register ${serial ?? ''}`}
      description="Which motor is this? Check the model on the unit's label, then press its button or its number."
    >
      <div className="flex flex-col gap-3">
        {error ? (
          <Alert tone="fault" title="Not registered">
            {error}
          </Alert>
        ) : null}
        {models.length === 0 ? (
          <Alert tone="fault" title="No model to choose">
            This station is not set up for any model with a released recipe. Ask the process engineer.
          </Alert>
        ) : null}
        <ul className="flex flex-col gap-3">
          {models.map((m, i) => (
            <li key={m.id}>
              <button
                type="button"
                autoFocus={i === 0}
                onClick={() => choose(m)}
                disabled={register.isPending}
                aria-keyshortcuts={String(i + 1)}
                className="chamfer chamfer-sm flex min-h-20 w-full items-center gap-4 px-5 text-left [--ch-edge:var(--color-graphite-500)] [--ch-fill:var(--color-graphite-800)] hover:[--ch-edge:var(--color-copper-400)] disabled:opacity-60"
              >
                <Kbd>{String(i + 1)}</Kbd>
                <span className="flex flex-col">
                  <span className="text-2xl font-bold text-graphite-50">{m.code}</span>
                  <span className="text-graphite-300">
                    {m.name} · {m.polePairs} pole pairs
                    {m.activeRecipe ? ` · recipe v${m.activeRecipe.version}` : ' · no released recipe'}
                  </span>
                </span>
              </button>
            </li>
          ))}
        </ul>
        <div className="flex justify-end pt-2">
          <Button onClick={onClose} size="lg">
            Cancel <Kbd>Esc</Kbd>
          </Button>
        </div>
      </div>
    </Dialog>
  );
}
