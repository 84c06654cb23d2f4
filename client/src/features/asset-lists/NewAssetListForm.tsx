import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { CreateAssetListBodySchema, type AssetListDetail } from '@shared/schemas/assetLists';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { ErrorAlert } from '../../components/Alert';
import { ApiError } from '../../lib/api';
import { useCreateAssetList } from './api';

/** Pasted symbols in the order entered; spaces, commas, semicolons and new lines all separate. */
export const splitSymbols = (text: string) => text.split(/[\s,;]+/).filter(Boolean);

const { name, description, symbols } = CreateAssetListBodySchema.shape;

/** The form's flat shape; the symbols rules (at least two, at most 5000) are the server's own schema. */
const NewListSchema = z
  .object({ name, description: z.string().trim().max(500, 'at most 500 characters'), symbolsText: z.string() })
  .superRefine((v, ctx) => {
    const typed = splitSymbols(v.symbolsText);
    const checked = symbols.safeParse(typed);
    if (!checked.success) {
      ctx.addIssue({ code: 'custom', path: ['symbolsText'], message: checked.error.issues[0]?.message ?? 'check the symbols' });
      return;
    }
    // Same wording as the server's check, so a repeat reads the same wherever it is caught.
    const firstRow = new Map<string, number>();
    const repeats: string[] = [];
    typed.forEach((symbol, k) => {
      const seen = firstRow.get(symbol);
      if (seen === undefined) firstRow.set(symbol, k);
      else repeats.push(`row ${k + 1}: duplicate symbol ${symbol} (also row ${seen + 1})`);
    });
    if (repeats.length) ctx.addIssue({ code: 'custom', path: ['symbolsText'], message: summarise(repeats) });
  });
type NewList = z.infer<typeof NewListSchema>;

/** Every problem in one line, the first ten spelled out. */
function summarise(messages: string[]): string {
  const shown = messages.slice(0, 10).join('; ');
  return messages.length > 10 ? `${shown}; and ${messages.length - 10} more` : shown;
}

/** Name and pasted symbols → a saved list. The server's 422 names each refused row and symbol beside the field. */
export function NewAssetListForm({ onSaved, onCancel }: { onSaved: (list: AssetListDetail) => void; onCancel: () => void }) {
  const create = useCreateAssetList();
  const form = useForm<NewList>({ resolver: zodResolver(NewListSchema), defaultValues: { name: '', description: '', symbolsText: '' } });
  const { errors } = form.formState;
  const count = splitSymbols(form.watch('symbolsText') ?? '').length;

  const submit = form.handleSubmit((v) =>
    create.mutate(
      { name: v.name, description: v.description, symbols: splitSymbols(v.symbolsText) },
      {
        onSuccess: (saved) => {
          form.reset();
          onSaved(saved);
        },
        onError: (error) => {
          if (!(error instanceof ApiError)) return;
          const symbolProblems = error.issues.filter((i) => i.path.startsWith('symbols')).map((i) => i.message);
          if (symbolProblems.length) form.setError('symbolsText', { message: summarise(symbolProblems) });
          const nameProblem = error.issues.find((i) => i.path === 'name');
          if (nameProblem) form.setError('name', { message: nameProblem.message });
        },
      },
    ),
  );
  // Problems the fields already show are not repeated in the box above them.
  const shownBesideFields = create.error instanceof ApiError && create.error.issues.some((i) => i.path === 'name' || i.path.startsWith('symbols'));

  return (
    <form onSubmit={submit} noValidate aria-label="New asset list" className="flex flex-col gap-3">
      {create.isError && !shownBesideFields ? <ErrorAlert error={create.error} title="The list was not saved" /> : null}
      <div className="grid gap-3 md:grid-cols-2">
        <Field label="List name" error={errors.name?.message}>
          <input className="field-input" autoComplete="off" {...form.register('name')} />
        </Field>
        <Field label="Description (optional)" error={errors.description?.message}>
          <input className="field-input" autoComplete="off" {...form.register('description')} />
        </Field>
      </div>
      <Field
        label="Symbols"
        error={errors.symbolsText?.message}
        hint={`Paste or type symbols as stored, separated by spaces, commas or new lines; the order is kept and problems name each symbol’s position (row). ${count} entered.`}
      >
        <textarea rows={5} className="field-input font-mono" spellCheck={false} {...form.register('symbolsText')} />
      </Field>
      <p className="text-xs text-ink-faint">A saved list cannot be edited afterwards: a fit queued over it uses exactly these assets. To change one, save a new list.</p>
      <div className="flex items-center gap-2">
        <Button type="submit" variant="primary" disabled={create.isPending}>
          {create.isPending ? 'Saving…' : 'Save list'}
        </Button>
        <Button variant="quiet" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
