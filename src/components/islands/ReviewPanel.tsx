import { Fragment, useState } from 'react';
import { describeRule, positivityUsed } from '../../lib/schemas/positivitySettings';
import { linkField, reviewField } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';

interface Review { decision: string; comment: string; reviewedAt: string; reviewer: string | null }
interface Props {
  fieldId: string; status: string; version: number; canAnalyse: boolean; reviews: Review[]; summary: Record<string, unknown> | null;
  /** The current link run's settings: per marker the threshold rule, k and threshold used. */
  settings?: Record<string, unknown> | null;
}

/** Linking, approval and send-back of a field, with the record of earlier reviews. */
export default function ReviewPanel({ fieldId, status, version, canAnalyse, reviews, summary, settings = null }: Props) {
  const [comment, setComment] = useState('');
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [busy, setBusy] = useState(false);

  async function post(call: () => Promise<unknown>) {
    setBusy(true);
    try {
      await call();
    } catch (e) {
      return setMsg({ ok: false, text: errorText(e) });
    } finally {
      setBusy(false);
    }
    window.location.reload();
  }
  const positive = (summary?.positiveByMarker ?? {}) as Record<string, number>;
  // older runs may carry the linker's own name for the same count
  const spotsWithoutVesicle = (summary?.spotsWithoutVesicleByMarker ?? summary?.unmatchedSpotsByMarker ?? {}) as Record<string, number>;
  const channels = (summary?.channels ?? {}) as Record<string, { nbSpots?: number; thresholdCounts?: number }>;
  // what each marker was called against; older runs without settings show the summary's threshold only
  const markerNames = (Array.isArray(settings?.markers) ? settings.markers : Object.keys(positive)) as string[];
  const thresholds = markerNames.map((m) => {
    const used = positivityUsed(settings, m);
    return { marker: m, counts: used?.thresholdCounts ?? channels[m]?.thresholdCounts ?? null, words: used ? describeRule(used) : null };
  });

  return (
    <div className="card text-sm space-y-3" data-testid="review-panel">
      <h2>Linking and review</h2>
      {summary && (
        <dl className="grid grid-cols-2 gap-y-1">
          <dt className="text-mica-600">Vesicles</dt><dd>{String(summary.nbVesicles)}</dd>
          {Object.entries(positive).map(([m, k]) => <Fragment key={m}><dt className="text-mica-600">{m}+</dt><dd>{k}</dd></Fragment>)}
          <dt className="text-mica-600">Outside the frame</dt><dd>{String(summary.nbOutOfFrame)}</dd>
          <dt className="text-mica-600">No marker</dt><dd>{String(summary.nbVesiclesWithoutMarker)}</dd>
        </dl>
      )}
      {summary && thresholds.length > 0 && (
        <div className="space-y-1" data-testid="positivity-thresholds">
          <h3 className="font-semibold">Positivity thresholds</h3>
          <dl className="grid grid-cols-2 gap-y-1">
            {thresholds.map((t) => (
              <Fragment key={t.marker}>
                <dt className="text-mica-600">{t.marker}</dt>
                <dd>
                  {t.counts == null ? '–' : `${Number(t.counts.toPrecision(6))} counts`}
                  {t.words && <span className="block text-xs text-mica-600">{t.words}</span>}
                </dd>
              </Fragment>
            ))}
          </dl>
          <p className="text-mica-600 text-xs">
            Under each marker: what &quot;positive&quot; means for it. The counts are the joint amplitude a vesicle needs on a typical
            background (or the hand-set threshold). Rules, k and the camera noise model are set on the study page.
          </p>
        </div>
      )}
      {summary && Object.keys(spotsWithoutVesicle).length > 0 && (
        <div className="space-y-1" data-testid="spots-without-vesicle">
          <h3 className="font-semibold">Spots without a vesicle</h3>
          <dl className="grid grid-cols-2 gap-y-1">
            {Object.entries(spotsWithoutVesicle).map(([m, k]) => (
              <Fragment key={m}>
                <dt className="text-mica-600">{m}</dt>
                <dd>{k} spots{channels[m]?.nbSpots != null ? ` of ${channels[m].nbSpots} detected` : ''}</dd>
              </Fragment>
            ))}
          </dl>
          <p className="text-mica-600 text-xs">
            Fluorescent spots with no vesicle in the height map and no fiducial bead nearby (within 2 PSF sigmas). Usually
            free label or antibody aggregates, sometimes vesicles too small or too flat to detect. Many of them suggest
            washing or blocking was incomplete; they are not counted as vesicle signal.
          </p>
        </div>
      )}
      {canAnalyse && ['registered', 'linked'].includes(status) && (
        <button type="button" className="btn w-full justify-center" disabled={busy} onClick={() => post(() => linkField(fieldId))}>{status === 'linked' ? 'Link again' : 'Link vesicles to markers'}</button>
      )}
      {canAnalyse && ['linked', 'approved'].includes(status) && (
        <div className="space-y-2">
          <label className="field-label" htmlFor="review-comment">Comment {status === 'approved' ? '(required to send back)' : ''}</label>
          <textarea id="review-comment" className="input" rows={2} value={comment} onChange={(e) => setComment(e.target.value)} />
          <div className="flex gap-2">
            {status === 'linked' && <button type="button" className="btn" disabled={busy} onClick={() => post(() => reviewField(fieldId, { decision: 'approved', comment, expectedVersion: version }))}>Approve field</button>}
            <button type="button" className="btn btn-quiet" disabled={busy} onClick={() => post(() => reviewField(fieldId, { decision: 'sent_back', comment, expectedVersion: version }))}>Send back</button>
          </div>
        </div>
      )}
      {msg && <p className={`notice ${msg.ok ? 'notice-ok' : 'notice-error'}`} role="alert">{msg.text}</p>}
      {reviews.length > 0 && (
        <ul className="space-y-1 border-t border-mica-100 pt-2">
          {reviews.map((r, i) => <li key={i}><strong>{r.decision === 'approved' ? 'Approved' : 'Sent back'}</strong> by {r.reviewer ?? '–'} · {r.reviewedAt.slice(0, 16).replace('T', ' ')} UTC{r.comment && <>: “{r.comment}”</>}</li>)}
        </ul>
      )}
    </div>
  );
}
