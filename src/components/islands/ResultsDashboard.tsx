import { useEffect, useState } from 'react';
import type { ResultSource, SampleResults, StudyComparison } from '../../lib/reporting/types';
import { getSampleResults } from '../../lib/api-client/routes';
import { SampleView } from './results/SampleView';
import { StudyView } from './results/StudyView';

type Props =
  | { kind: 'sample'; initial: SampleResults; canPreview: boolean }
  | { kind: 'study'; initial: StudyComparison };

/**
 * Results of a sample or a study for collaborators and the lab. First paint comes from the page;
 * switching between the release and the current analysis (lab only) or between groups refetches
 * from the results API.
 */
export default function ResultsDashboard(props: Props) {
  if (props.kind === 'study') return <StudyView initial={props.initial} />;
  return <SampleDashboard initial={props.initial} canPreview={props.canPreview} />;
}

function SampleDashboard({ initial, canPreview }: { initial: SampleResults; canPreview: boolean }) {
  const [source, setSource] = useState<ResultSource>(initial.source);
  const [data, setData] = useState<SampleResults | null>(initial);
  const [error, setError] = useState<string | null>(null);
  useEffect(() => {
    if (source === initial.source && data === initial) return;
    const ctrl = new AbortController();
    getSampleResults(initial.sample.id, source, ctrl.signal)
      .then((d) => { setData(d); setError(null); })
      .catch((e: Error) => { if (e.name !== 'AbortError') { setData(null); setError(e.message); } });
    return () => ctrl.abort();
  }, [source]);
  const q = `?source=${source}`;
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap gap-3 items-center no-print">
        {canPreview && (
          <label className="text-sm flex items-center gap-2">
            <span className="field-label mb-0">Data</span>
            <select className="input w-auto" value={source} onChange={(e) => setSource(e.target.value as ResultSource)}>
              <option value="released">Latest release</option>
              <option value="current">Current analysis (unreleased preview)</option>
            </select>
          </label>
        )}
        <a className="btn" href={`/api/samples/${initial.sample.id}/results.csv${q}`} download>Download summary CSV</a>
        <a className="btn btn-quiet" href={`/api/samples/${initial.sample.id}/vesicles.csv${q}`} download>Download per-vesicle CSV</a>
        <a className="btn btn-quiet" href={`/results/${initial.sample.id}?print=1${source === 'current' ? '&source=current' : ''}`}>Printable report</a>
      </div>
      {source === 'current' && <p className="notice notice-caution text-sm">Unreleased preview: collaborators do not see these numbers until the sample is released again.</p>}
      {error && <p className="notice notice-error text-sm" role="alert">{error}</p>}
      {data && <SampleView r={data} />}
    </div>
  );
}
