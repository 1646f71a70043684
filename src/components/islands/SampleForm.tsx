import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { SampleCreateRequest } from '../../lib/schemas/fields';
import { looksIdentifying } from '../../lib/reporting/looksIdentifying';
import { createSample } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

type Values = z.input<typeof SampleCreateRequest>;

/** Records a de-identified sample; warns while typing when the code looks like a name or a date of birth. */
export default function SampleForm({ studyId }: { studyId: string }) {
  const { register, handleSubmit, watch, reset, formState: { errors, isSubmitting } } = useForm<Values>({
    resolver: zodResolver(SampleCreateRequest),
    defaultValues: { controlKind: 'none', substrate: 'mica' },
  });
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [confirmed, setConfirmed] = useState(false);
  const check = looksIdentifying(watch('code') ?? '');

  async function onSubmit(v: Values) {
    if (check.identifying && !confirmed) return setMsg({ ok: false, text: 'Confirm that the code is not a personal identifier, or change it.' });
    try {
      await createSample(studyId, v);
    } catch (e) {
      return setMsg({ ok: false, text: errorText(e) });
    }
    setMsg({ ok: true, text: `Sample ${v.code} recorded.` });
    reset();
    setConfirmed(false);
    window.location.reload();
  }
  const field = (name: keyof Values, label: string, placeholder = '') => (
    <div>
      <label className="field-label" htmlFor={`sf-${name}`}>{label}</label>
      <input id={`sf-${name}`} className="input" placeholder={placeholder} {...register(name)} />
      {errors[name]?.message && <p className="text-xs text-glow-600 mt-1">{String(errors[name]!.message)}</p>}
    </div>
  );

  return (
    <form method="post" onSubmit={handleSubmit(onSubmit)} className="grid gap-3 md:grid-cols-4 items-start" aria-label="Record a sample">
      <div className="md:col-span-1">
        {field('code', 'Sample code (de-identified)', 'e.g. HCP-017')}
        {check.identifying && (
          <div className="notice notice-caution text-xs mt-2" role="alert">
            {check.reasons.map((r) => <p key={r.code}>{r.message}</p>)}
            <label className="flex gap-2 mt-1"><input type="checkbox" checked={confirmed} onChange={(e) => setConfirmed(e.target.checked)} /> It is not a personal identifier</label>
          </div>
        )}
      </div>
      {field('groupLabel', 'Group', 'patient / healthy control')}
      {field('source', 'Biofluid or cell line', 'plasma')}
      {field('isolationMethod', 'Isolation method', 'size-exclusion chromatography')}
      {field('substrate', 'Substrate', 'mica')}
      {field('dilution', 'Dilution', '1:10')}
      <div>
        <label className="field-label" htmlFor="sf-date">Collection month</label>
        {/* kept to the month: a full date can identify a donor */}
        <input id="sf-date" type="month" className="input" {...register('collectionDate', { setValueAs: (v: string) => v || undefined })} />
      </div>
      <div>
        <label className="field-label" htmlFor="sf-control">Control kind</label>
        <select id="sf-control" className="input" {...register('controlKind')}>
          <option value="none">not a control</option>
          <option value="isotype">isotype control</option>
          <option value="secondary_only">secondary-only control</option>
          <option value="buffer_only">buffer-only control</option>
        </select>
      </div>
      <div className="md:col-span-3">{field('notes', 'Notes')}</div>
      <button className="btn self-end" type="submit" disabled={isSubmitting}>Record sample</button>
      {msg && <p className={`md:col-span-4 notice ${msg.ok ? 'notice-ok' : 'notice-error'}`}>{msg.text}</p>}
    </form>
  );
}
