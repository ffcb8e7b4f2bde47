import { useEffect, useState } from 'react';
import { get, useForm, type FieldErrors, type Path, type Resolver } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { RECIPE_FIELDS, type RecipeField } from '#shared/recipe/recipe-fields';
import type { RecipeVersionView } from '#shared/schemas/recipes';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { CheckboxField, TextAreaField, TextField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { isApiError } from '#src/lib/api-client';
import { useSaveDraft } from '../api/recipes';
import {
  recipeFormErrorMap,
  recipeFormSchema,
  type Recipe,
  type RecipeFormValues,
} from './recipe-form-schema';

const GROUPS: { title: string; paths: string[] }[] = [
  { title: 'Motor', paths: ['name', 'polePairs'] },
  { title: 'Hall sensors', paths: ['hallRiseDeg.A', 'hallRiseDeg.B', 'hallRiseDeg.C', 'debounceUs'] },
  { title: 'Station and firmware', paths: ['bemfDelayUs', 'countsPerTurn', 'countsSigned', 'maxAttempts'] },
  {
    title: 'Limits',
    paths: RECIPE_FIELDS.filter((f) => f.path.startsWith('limits.')).map((f) => f.path),
  },
];

const fieldByPath = new Map(RECIPE_FIELDS.map((f) => [f.path, f]));

/** The error of a field: its own, or for the upper end of a range the range's (minimum above maximum). */
function errorOf(errors: FieldErrors<RecipeFormValues>, path: string): string | undefined {
  const own = get(errors, path) as { message?: string } | undefined;
  if (own?.message) return own.message;
  if (path.endsWith('.1')) {
    const range = get(errors, path.slice(0, -2)) as
      { message?: string; root?: { message?: string } } | undefined;
    return range?.message ?? range?.root?.message;
  }
  return undefined;
}

/**
 * The draft editor: every recipe number with its unit and what it does, validated with the shared
 * recipe schema before it is sent; the server's refusals land next to their field. A save that lost
 * a race keeps the edits on screen and says who saved in between.
 */
export function DraftEditor({
  version,
  onDirtyChange,
}: {
  version: RecipeVersionView;
  onDirtyChange: (dirty: boolean) => void;
}) {
  const save = useSaveDraft(version.id);
  const [banner, setBanner] = useState<{ tone: 'fault' | 'ok'; text: string } | null>(null);
  const [conflict, setConflict] = useState(false);
  const form = useForm<RecipeFormValues, unknown, Recipe>({
    resolver: zodResolver(recipeFormSchema, { error: recipeFormErrorMap }) as unknown as Resolver<
      RecipeFormValues,
      unknown,
      Recipe
    >,
    defaultValues: version.body,
  });
  const [notes, setNotes] = useState(version.notes ?? '');
  const { errors, isSubmitting, isDirty } = form.formState;
  useEffect(() => onDirtyChange(isDirty), [isDirty, onDirtyChange]);

  const submit = form.handleSubmit(async (body) => {
    setBanner(null);
    setConflict(false);
    try {
      // The saved version comes back with a new revision and the editor starts afresh from it.
      await save.mutateAsync({ body, notes: notes.trim() || null, revision: version.revision });
    } catch (e) {
      if (!isApiError(e)) return setBanner({ tone: 'fault', text: 'Something went wrong. Try again.' });
      if (e.code === 'recipes.changed_meanwhile') setConflict(true);
      let unplaced = e.issues.length === 0;
      for (const issue of e.issues) {
        const path = issue.path.replace(/^body\./, '');
        if (fieldByPath.has(path) || fieldByPath.has(`${path}.1`)) {
          form.setError(path as Path<RecipeFormValues>, { type: 'server', message: issue.message });
        } else unplaced = true;
      }
      if (unplaced) setBanner({ tone: 'fault', text: e.message });
    }
  });

  const input = (f: RecipeField) => {
    // The unit keeps its case (µs, °e) inside the upper-case label; it is left out where the label names it.
    const label =
      f.unit && !f.label.toLowerCase().includes(f.unit.toLowerCase()) ? (
        <>
          {f.label} <span className="normal-case">({f.unit})</span>
        </>
      ) : (
        f.label
      );
    const error = errorOf(errors, f.path);
    const name = f.path as Path<RecipeFormValues>;
    if (f.kind === 'boolean') {
      return <CheckboxField key={f.path} label={label} hint={f.help} {...form.register(name)} />;
    }
    if (f.kind === 'text') {
      return <TextField key={f.path} label={label} hint={f.help} error={error} {...form.register(name)} />;
    }
    return (
      <TextField
        key={f.path}
        label={label}
        hint={f.help}
        error={error}
        type="number"
        step="any"
        inputMode="decimal"
        required={!f.optional}
        {...form.register(name, {
          setValueAs: (v: unknown) => (v === '' || v === null ? undefined : Number(v)),
        })}
      />
    );
  };

  return (
    <form
      onSubmit={submit}
      noValidate
      className="flex flex-col gap-6"
      aria-label={`Edit draft version ${version.version}`}
    >
      {conflict ? (
        <Alert tone="fault" title="Someone saved this draft while you were editing">
          <p>{banner?.text}</p>
          <p className="mt-2">
            Your edits are still in the form below. Reload the saved version to see theirs (your edits will be
            replaced), then change it again.
          </p>
          <Button className="mt-3" onClick={() => window.location.reload()}>
            Reload the saved version
          </Button>
        </Alert>
      ) : banner ? (
        <Alert tone={banner.tone}>{banner.text}</Alert>
      ) : null}
      {GROUPS.map((g) => (
        <Panel key={g.title} title={g.title} as="div">
          <div className="grid gap-5 md:grid-cols-2">{g.paths.map((p) => input(fieldByPath.get(p)!))}</div>
        </Panel>
      ))}
      <TextAreaField
        label="Notes"
        hint="Optional: anything the reviewer should know beyond the change reason."
        value={notes}
        onChange={(e) => setNotes(e.target.value)}
      />
      <div className="flex flex-wrap items-center gap-3">
        <Button type="submit" variant="primary" busy={isSubmitting}>
          Save draft
        </Button>
        <span className="text-graphite-300" role="status">
          {isDirty ? 'Unsaved changes' : `Saved as revision ${version.revision}`}
        </span>
      </div>
    </form>
  );
}
