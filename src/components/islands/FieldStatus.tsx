import { useEffect, useState } from 'react';
import { FIELD_STATUS_WORDS } from '../../lib/pages/fieldStatusWords';
import { getFieldStatus, retryField } from '../../lib/api-client/routes';
import { errorText } from '../../lib/api-client/http';
import ProgressBar from './ProgressBar';

interface Status { status: string; failureReason: string | null; progress: { stage: string; fraction: number } | null }

const WORDS = FIELD_STATUS_WORDS;

/** Live status of a field's processing; reloads the page once the field is processed. */
export default function FieldStatus({ fieldId, initial, canRetry }: { fieldId: string; initial: Status; canRetry: boolean }) {
  const [s, setS] = useState(initial);
  const [msg, setMsg] = useState<string | null>(null);
  const working = s.status === 'ingesting' || s.status === 'uploading' || (s.progress != null && s.progress.fraction < 1);
  useEffect(() => {
    if (!working) return;
    const stop = new AbortController();
    const t = setInterval(async () => {
      let next: Status;
      try {
        next = (await getFieldStatus(fieldId, stop.signal)).field;
      } catch {
        return; // a missed poll is retried 1.5 s later
      }
      setS(next);
      if (next.status !== initial.status || (next.progress?.fraction ?? 1) >= 1) window.location.reload();
    }, 1500);
    return () => { clearInterval(t); stop.abort(); };
  }, [working, fieldId]);

  async function retry() {
    try {
      await retryField(fieldId);
      setS({ status: 'ingesting', failureReason: null, progress: { stage: 'queued', fraction: 0 } });
    } catch (e) {
      setMsg(errorText(e));
    }
  }

  return (
    <div className="card" data-testid="field-status">
      <div className="flex justify-between items-center">
        <div className="font-semibold">{WORDS[s.status] ?? s.status}</div>
        {s.status === 'failed' && canRetry && <button className="btn btn-quiet" onClick={retry}>Retry processing</button>}
      </div>
      {working && (
        <div className="mt-2">
          <ProgressBar fraction={s.progress?.fraction ?? 0} animate />
          <div className="text-xs text-mica-600 mt-1">{s.progress?.stage ?? 'queued'} · {Math.round((s.progress?.fraction ?? 0) * 100)}%</div>
        </div>
      )}
      {s.failureReason && <p className="notice notice-error mt-2" role="alert">{s.failureReason}</p>}
      {msg && <p className="notice notice-error mt-2">{msg}</p>}
    </div>
  );
}
