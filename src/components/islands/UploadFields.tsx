import { useRef, useState, type DragEvent } from 'react';
import { useForm, useFieldArray } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { AcquisitionSettings, type InspectReply } from '../../lib/schemas/fields';
import { uploadFile, createField } from '../../lib/api-client/uploads';
import { ApiError } from '../../lib/api-client/http';
import ProgressBar from './ProgressBar';
import { choosePixelSize, distrustFilePixelSize, fmtNm, type PixelSizeChoice, type PixelSizeKind } from '../../lib/uploads/choosePixelSize';

interface StudyOption {
  id: string;
  name: string;
  samples: { id: string; code: string }[];
  panel: { marker: string; emissionNm: number | null }[];
}

// `key` is stable for the life of a row, so late upload progress never lands on another file's row
type FileState = { key: string; file: File } & (
  | { status: 'uploading'; progress: number }
  | { status: 'done'; meta: InspectReply }
  | { status: 'failed'; message: string });
type FileRow = FileState extends infer T ? T extends FileState ? Omit<T, 'key' | 'file'> : never : never;
/** Files of one field draft, kept by the draft's stable id (not its position, which shifts on removal). */
type FilesByDraft = Record<string, FileState[]>;

// The form uses the same acquisition schema as the API; empty number inputs mean "read it from the file".
const FormSchema = z.object({
  studyId: z.uuid('Choose a study'),
  settings: AcquisitionSettings,
  drafts: z.array(z.object({ sampleId: z.uuid('Choose a sample'), name: z.string().trim().min(1, 'Name the field').max(120) })).min(1),
});
type FormValues = z.input<typeof FormSchema>;

const num = { setValueAs: (v: string) => (v === '' || v === undefined ? undefined : Number(v)) };
const mb = (b: number) => `${(b / 1024 ** 2).toFixed(1)} MB`;

function describe(meta: InspectReply) {
  const px = meta.pixelSizeNm ? `${meta.pixelSizeNm.x.toFixed(2)} nm/px (from ${meta.pixelSizeSource === 'ome-xml' ? 'OME-XML' : 'resolution tags'})` : 'pixel size not in file';
  return `${meta.widthPx} × ${meta.heightPx} px · ${meta.bitsPerSample}-bit ${meta.sampleFormat} · ${meta.pageCount} page${meta.pageCount > 1 ? 's' : ''} · ${px}`;
}

/** The reader's own warnings, plus why its pixel size will not be used (if so). */
function fileWarnings(kind: PixelSizeKind, meta: InspectReply) {
  const distrust = distrustFilePixelSize(kind, meta);
  return distrust ? [...meta.warnings, distrust] : meta.warnings;
}

/** One line saying which pixel size the field will be saved with, or why it cannot be saved yet. */
function PixelSizeLine({ label, choice, testId }: { label: string; choice: PixelSizeChoice; testId: string }) {
  const from = { typed: 'typed above', 'ome-xml': 'from the file, OME-XML', 'resolution-tags': 'from the file, resolution tags' };
  return (
    <div data-testid={testId} className="text-sm space-y-1">
      {choice.valueNm !== null
        ? <p>{label} pixel size used: <strong>{fmtNm(choice.valueNm)}</strong> ({from[choice.source!]})</p>
        : <p className="notice notice-error" role="alert">{label} pixel size needed: {choice.error}</p>}
      {choice.warnings.map((w) => <p key={w} className="notice notice-caution">⚠ {w}</p>)}
    </div>
  );
}

function FileSlot({ label, kind, state, onFiles, onRetry, onRemove, multiple, testId }: {
  label: string; kind: PixelSizeKind; state: FileState[]; onFiles: (f: File[]) => void; onRetry: (key: string) => void; onRemove: (key: string) => void; multiple?: boolean; testId: string;
}) {
  const [over, setOver] = useState(false);
  const drop = (e: DragEvent) => { e.preventDefault(); setOver(false); onFiles([...e.dataTransfer.files]); };
  return (
    <div>
      <div className="field-label">{label}</div>
      <label
        onDragOver={(e) => { e.preventDefault(); setOver(true); }} onDragLeave={() => setOver(false)} onDrop={drop}
        className={`block border-2 border-dashed rounded-lg p-4 text-sm text-center cursor-pointer ${over ? 'border-tip-500 bg-tip-50' : 'border-mica-200 bg-mica-50'}`}>
        Drop TIFF file{multiple ? 's' : ''} here or <span className="text-tip-600 underline">choose</span>
        <input type="file" accept=".tif,.tiff,image/tiff" multiple={multiple} className="sr-only" data-testid={testId}
          onChange={(e) => { onFiles([...(e.target.files ?? [])]); e.target.value = ''; }} />
      </label>
      <ul className="mt-2 space-y-2">
        {state.map((s) => (
          <li key={s.key} className="text-sm" data-testid={`${testId}-state`}>
            <div className="flex justify-between items-center gap-2">
              <span className="font-medium break-all">{s.file.name}</span>
              <span className="flex items-center gap-2 shrink-0">
                <span className="text-mica-400">{mb(s.file.size)}</span>
                <button type="button" className="btn btn-quiet" aria-label={`Remove file ${s.file.name}`} onClick={() => onRemove(s.key)}>Remove</button>
              </span>
            </div>
            {s.status === 'uploading' && (
              <ProgressBar fraction={s.progress} className="mt-1" />
            )}
            {s.status === 'done' && <div className="text-cap-600" data-testid="file-meta">✓ {describe(s.meta)}</div>}
            {s.status === 'done' && fileWarnings(kind, s.meta).map((w) => (
              <p key={w} className="notice notice-caution mt-1" data-testid="file-warning">⚠ {w}</p>
            ))}
            {s.status === 'failed' && (
              <div className="notice notice-error mt-1 flex justify-between items-center gap-2" role="alert">
                <span>{s.message}</span>
                <button type="button" className="btn-quiet btn" aria-label={`Retry file ${s.file.name}`} onClick={() => onRetry(s.key)}>Retry</button>
              </div>
            )}
          </li>
        ))}
      </ul>
    </div>
  );
}

/** Upload one or many fields: a height map and fluorescence frames each, sent straight to storage. */
export default function UploadFields({ studies }: { studies: StudyOption[] }) {
  const { register, control, handleSubmit, watch, formState: { errors, isSubmitting } } = useForm<FormValues>({
    resolver: zodResolver(FormSchema),
    defaultValues: { studyId: studies[0]?.id ?? '', settings: { imagingMedium: 'air', scanMode: 'intermittent contact', objectiveNa: 1.4, channelEmissionNm: [] }, drafts: [{ sampleId: '', name: '' }] },
  });
  const drafts = useFieldArray({ control, name: 'drafts' });
  const [topo, setTopo] = useState<FilesByDraft>({});
  const [fluo, setFluo] = useState<FilesByDraft>({});
  const [saved, setSaved] = useState<{ name: string; id?: string; error?: string }[]>([]);
  const nextKey = useRef(0);
  const study = studies.find((s) => s.id === watch('studyId'));
  const typedAfm = watch('settings.afmPixelNm');
  const typedFl = watch('settings.flPixelNm');
  const typed = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : undefined);

  /** Which pixel sizes a draft would be saved with, once its first height map and fluorescence file are read. */
  function choices(draftId: string) {
    const t = topo[draftId]?.[0];
    const f = fluo[draftId]?.[0];
    return {
      afm: t?.status === 'done' ? choosePixelSize('afm', t.meta, typed(typedAfm)) : null,
      fl: f?.status === 'done' ? choosePixelSize('fluorescence', f.meta, typed(typedFl)) : null,
    };
  }

  function send(which: 'topo' | 'fluo', draftId: string, key: string, file: File) {
    const set = which === 'topo' ? setTopo : setFluo;
    // a row removed meanwhile stays removed: updates only touch the row with this key
    const update = (row: FileRow) => set((prev) => ({
      ...prev, [draftId]: (prev[draftId] ?? []).map((s) => (s.key === key ? { ...row, key, file } as FileState : s)),
    }));
    uploadFile(watch('studyId'), file, (p) => update({ status: 'uploading', progress: p }))
      .then((meta) => update({ status: 'done', meta }))
      .catch((e) => update({ status: 'failed', message: e instanceof ApiError ? e.message : 'The upload failed. Retry or remove the file.' }));
  }
  const addFiles = (which: 'topo' | 'fluo', draftId: string, files: File[]) => {
    const rows: FileState[] = (which === 'topo' ? files.slice(0, 1) : files)
      .map((file) => ({ key: `f${nextKey.current++}`, file, status: 'uploading', progress: 0 }));
    if (which === 'topo') setTopo((p) => ({ ...p, [draftId]: rows }));
    else setFluo((p) => ({ ...p, [draftId]: [...(p[draftId] ?? []), ...rows] }));
    rows.forEach((r) => send(which, draftId, r.key, r.file));
  };
  const retry = (which: 'topo' | 'fluo', draftId: string, key: string) => {
    const row = (which === 'topo' ? topo : fluo)[draftId]?.find((s) => s.key === key);
    if (!row) return;
    (which === 'topo' ? setTopo : setFluo)((p) => ({
      ...p, [draftId]: (p[draftId] ?? []).map((s) => (s.key === key ? { key, file: row.file, status: 'uploading', progress: 0 } : s)),
    }));
    send(which, draftId, key, row.file);
  };
  const removeFile = (which: 'topo' | 'fluo', draftId: string, key: string) =>
    (which === 'topo' ? setTopo : setFluo)((p) => ({ ...p, [draftId]: (p[draftId] ?? []).filter((s) => s.key !== key) }));
  const removeDraft = (i: number) => {
    const id = drafts.fields[i].id;
    drafts.remove(i);
    const drop = (p: FilesByDraft) => { const { [id]: _gone, ...rest } = p; return rest; };
    setTopo(drop);
    setFluo(drop);
  };

  async function onSubmit(values: FormValues) {
    const parsed = FormSchema.parse(values);
    const results: typeof saved = [];
    for (const [i, d] of parsed.drafts.entries()) {
      const draftId = drafts.fields[i].id;
      const t = topo[draftId]?.[0];
      const fl = fluo[draftId] ?? [];
      if (t?.status !== 'done' || fl.length === 0 || fl.some((f) => f.status !== 'done')) {
        results.push({ name: d.name, error: 'Wait until its height map and every fluorescence file show as read (✓); retry or remove the failed ones.' });
        continue;
      }
      const { afm, fl: flChoice } = choices(draftId);
      const missing = [afm, flChoice].find((c) => c?.valueNm === null);
      if (missing) {
        results.push({ name: d.name, error: missing.error! });
        continue;
      }
      const done = [t, ...fl] as Extract<FileState, { status: 'done' }>[];
      try {
        const r = await createField({
          sampleId: d.sampleId, name: d.name, settings: parsed.settings,
          topographyUploadId: done[0].meta.uploadId, fluorescenceUploadIds: done.slice(1).map((f) => f.meta.uploadId),
          fileNames: Object.fromEntries(done.map((f) => [f.meta.uploadId, f.file.name])),
        });
        results.push({ name: d.name, id: r.id });
      } catch (e) {
        results.push({ name: d.name, error: e instanceof ApiError ? e.message : 'Saving failed.' });
      }
    }
    setSaved(results);
  }

  const settingsErr = errors.settings as Record<string, { message?: string }> | undefined;
  const input = (name: keyof z.input<typeof AcquisitionSettings>, label: string, unit: string, opts: { number?: boolean; placeholder?: string } = {}) => (
    <div>
      <label className="field-label" htmlFor={`s-${name}`}>{label}{unit && <span className="font-normal"> ({unit})</span>}</label>
      <input id={`s-${name}`} className="input" placeholder={opts.placeholder} {...register(`settings.${name}` as const, opts.number ? num : {})} />
      {settingsErr?.[name]?.message && <p className="text-xs text-glow-600 mt-1">{settingsErr[name]!.message}</p>}
    </div>
  );

  if (!studies.length) return <p className="card">You are not a biologist in any study yet. An administrator adds you to a study.</p>;

  return (
    <form method="post" onSubmit={handleSubmit(onSubmit)} className="space-y-6" aria-label="Upload fields">
      <section className="card grid gap-4 md:grid-cols-3">
        <div className="md:col-span-3">
          <label className="field-label" htmlFor="study">Study</label>
          <select id="study" className="input" {...register('studyId')}>{studies.map((s) => <option key={s.id} value={s.id}>{s.name}</option>)}</select>
          {study && <p className="text-xs text-mica-600 mt-1">Marker panel: {study.panel.map((p) => p.marker).join(', ') || 'none recorded'} — the fluorescence files must hold {study.panel.length || 'one or more'} channel(s) in this order.</p>}
        </div>
        {input('afmPixelNm', 'AFM pixel size', 'nm', { number: true, placeholder: 'from file' })}
        {input('tipRadiusNm', 'Tip radius', 'nm', { number: true, placeholder: 'e.g. 8' })}
        {input('scanMode', 'AFM scan mode', '', { placeholder: 'intermittent contact, contact or non-contact' })}
        <div>
          <label className="field-label" htmlFor="s-medium">Imaging medium</label>
          <select id="s-medium" className="input" {...register('settings.imagingMedium')}><option value="air">air</option><option value="liquid">liquid</option></select>
        </div>
        {input('flPixelNm', 'Fluorescence pixel size', 'nm', { number: true, placeholder: 'from file' })}
        {input('objectiveNa', 'Objective NA', '', { number: true })}
        {input('exposureMs', 'Exposure', 'ms', { number: true })}
      </section>

      {drafts.fields.map((d, i) => (
        <section key={d.id} className="card space-y-4" aria-label={`Field ${i + 1}`}>
          <div className="flex justify-between items-center">
            <h2>Field {i + 1}</h2>
            {drafts.fields.length > 1 && <button type="button" className="btn btn-quiet" aria-label={`Remove field ${i + 1}`} onClick={() => removeDraft(i)}>Remove field</button>}
          </div>
          <div className="grid gap-4 md:grid-cols-2">
            <div>
              <label className="field-label" htmlFor={`sample-${i}`}>Sample</label>
              <select id={`sample-${i}`} className="input" {...register(`drafts.${i}.sampleId`)}>
                <option value="">choose…</option>
                {study?.samples.map((s) => <option key={s.id} value={s.id}>{s.code}</option>)}
              </select>
              {errors.drafts?.[i]?.sampleId && <p className="text-xs text-glow-600 mt-1">{errors.drafts[i]!.sampleId!.message}</p>}
            </div>
            <div>
              <label className="field-label" htmlFor={`name-${i}`}>Field name</label>
              <input id={`name-${i}`} className="input" placeholder="e.g. grid B4" {...register(`drafts.${i}.name`)} />
              {errors.drafts?.[i]?.name && <p className="text-xs text-glow-600 mt-1">{errors.drafts[i]!.name!.message}</p>}
            </div>
          </div>
          <div className="grid gap-4 md:grid-cols-2">
            <FileSlot label="AFM height map (TIFF, nm)" kind="afm" testId={`topography-${i}`} state={topo[d.id] ?? []}
              onFiles={(f) => addFiles('topo', d.id, f)} onRetry={(k) => retry('topo', d.id, k)} onRemove={(k) => removeFile('topo', d.id, k)} />
            <FileSlot label="Fluorescence frames (TIFF: a stack or one file per channel)" kind="fluorescence" testId={`fluorescence-${i}`} multiple state={fluo[d.id] ?? []}
              onFiles={(f) => addFiles('fluo', d.id, f)} onRetry={(k) => retry('fluo', d.id, k)} onRemove={(k) => removeFile('fluo', d.id, k)} />
          </div>
          {(() => {
            const c = choices(d.id);
            return (c.afm || c.fl) && (
              <div className="grid gap-4 md:grid-cols-2">
                <div>{c.afm && <PixelSizeLine label="AFM" choice={c.afm} testId={`afm-pixel-${i}`} />}</div>
                <div>{c.fl && <PixelSizeLine label="Fluorescence" choice={c.fl} testId={`fl-pixel-${i}`} />}</div>
              </div>
            );
          })()}
        </section>
      ))}
      <div className="flex gap-3">
        <button type="button" className="btn btn-quiet" onClick={() => drafts.append({ sampleId: '', name: '' })}>Add another field</button>
        <button type="submit" className="btn" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : 'Confirm and save'}</button>
      </div>
      {saved.length > 0 && (
        <section className="card" aria-label="Saved" data-testid="upload-summary">
          <h2>Summary</h2>
          <ul className="mt-2 space-y-1 text-sm">
            {saved.map((s, i) => (
              <li key={i}>{s.id ? <>✓ <a href={`/fields/${s.id}`}>{s.name}</a> saved; processing has started.</> : <span className="text-glow-600">✗ {s.name}: {s.error}</span>}</li>
            ))}
          </ul>
        </section>
      )}
    </form>
  );
}
