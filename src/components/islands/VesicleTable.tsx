import { useMemo, useState } from 'react';
import { QueryClient, QueryClientProvider, useQuery, keepPreviousData } from '@tanstack/react-query';
import { useReactTable, getCoreRowModel, flexRender, createColumnHelper, type SortingState } from '@tanstack/react-table';
import { api } from '../../lib/api-client/http';
import { VesiclePage } from '../../lib/schemas/vesicles';

type Row = VesiclePage['rows'][number];
interface Props { fieldId?: string; sampleId?: string }

const col = createColumnHelper<Row>();
const n = (v: number | null | undefined, d = 1) => (v == null || !Number.isFinite(v) ? '–' : v.toFixed(d));
/** q below 0.001 as "< 0.001"; else 2 significant digits. */
const fmtQ = (q: number | null) => (q == null || !Number.isFinite(q) ? '–' : q < 0.001 ? '< 0.001' : q.toPrecision(2));
const SORTABLE = new Set(['index', 'heightNm', 'diameterNm', 'volumeNm3', 'phenotype']);

function Table({ fieldId, sampleId }: Props) {
  const [page, setPage] = useState(0);
  const [sorting, setSorting] = useState<SortingState>([{ id: 'index', desc: false }]);
  const [filters, setFilters] = useState({ minHeightNm: '', maxHeightNm: '', minDiameterNm: '', maxDiameterNm: '', phenotype: '' });
  const params = new URLSearchParams({
    ...(fieldId ? { fieldId } : { sampleId: sampleId! }),
    page: String(page), pageSize: '50', sort: sorting[0]?.id ?? 'index', dir: sorting[0]?.desc ? 'desc' : 'asc',
    ...Object.fromEntries(Object.entries(filters).filter(([, v]) => v !== '')),
  });
  const q = useQuery({
    queryKey: ['vesicles', params.toString()],
    queryFn: ({ signal }) => api(`/api/vesicles?${params}`, VesiclePage, { signal }),
    placeholderData: keepPreviousData,
  });
  const markers = q.data?.markers ?? [];
  const columns = useMemo(() => [
    col.accessor('index', { header: '#', cell: (c) => c.getValue() + 1 }),
    col.accessor('heightNm', { header: 'Height (nm)', cell: (c) => n(c.getValue()) }),
    // the threshold footprint is tip-broadened and threshold-dependent: named as such; the cap columns are the sizes
    col.accessor('diameterNm', { header: 'Footprint diameter (nm)', cell: (c) => n(c.getValue()) }),
    col.display({ id: 'capBase', header: 'Cap base diameter (nm)', cell: (c) => n(c.row.original.capBaseDiameterNm) }),
    col.accessor('contactAngleDeg', { header: 'Contact angle (°)', cell: (c) => n(c.getValue(), 0) }),
    col.display({ id: 'capVolume', header: 'Cap volume (nm³)', cell: (c) => (c.row.original.capVolumeNm3 == null ? '–' : Math.round(c.row.original.capVolumeNm3).toLocaleString('en')) }),
    col.accessor('sphereDiameterNm', { header: 'Sphere-equiv. diameter (nm)', cell: (c) => n(c.getValue()) }),
    // each marker: the joint amplitude with its call, then z (amplitude / SE) and q (BH within the field)
    ...markers.flatMap((m, i) => [
      col.display({
        id: `m${i}`,
        header: `${m} amplitude (counts)`,
        cell: (c) => {
          const k = c.row.original.markers[i];
          const call = k?.call ?? (k?.amplitude == null ? 'not_measured' : c.row.original.phenotype.split(' ').includes(`${m}+`) ? 'positive' : 'negative');
          if (call === 'not_measured') return <span className="text-mica-400" title="outside this channel's frame: no call">not measured</span>;
          const pos = call === 'positive';
          return <span className={pos ? 'text-cap-600 font-semibold' : 'text-mica-600'}>{n(k?.amplitude, 0)} {pos ? '+' : '−'}</span>;
        },
      }),
      col.display({ id: `z${i}`, header: `${m} z`, cell: (c) => <span className="text-mica-600">{n(c.row.original.markers[i]?.z ?? null, 1)}</span> }),
      col.display({ id: `q${i}`, header: `${m} q`, cell: (c) => <span className="text-mica-600">{fmtQ(c.row.original.markers[i]?.q ?? null)}</span> }),
    ]),
    col.accessor('phenotype', { header: 'Phenotype', cell: (c) => <span className="whitespace-nowrap">{c.getValue()}</span> }),
    col.display({
      id: 'flags', header: 'Flags',
      cell: (c) => [c.row.original.split ? 'split from a touching pair' : '', c.row.original.capFlag ? `cap: ${c.row.original.capFlag.replaceAll('_', ' ')}` : '', c.row.original.outOfFrame ? 'outside a frame' : '']
        .filter(Boolean).join('; '),
    }),
  ], [markers.join(',')]);

  const table = useReactTable({
    data: q.data?.rows ?? [],
    columns,
    manualSorting: true,
    manualPagination: true,
    state: { sorting },
    onSortingChange: (u) => { setSorting(u); setPage(0); },
    getCoreRowModel: getCoreRowModel(),
  });
  const total = q.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / 50));
  const setF = (k: keyof typeof filters) => (e: { target: { value: string } }) => { setFilters({ ...filters, [k]: e.target.value }); setPage(0); };
  const focus = (r: Row) => window.dispatchEvent(new CustomEvent('heightlight:focus-vesicle', { detail: { x: r.xAfmPx, y: r.yAfmPx, fieldId: r.fieldId } }));

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap gap-3 items-end text-sm" aria-label="Filters">
        <label>Height from (nm)<input className="input w-24" inputMode="decimal" value={filters.minHeightNm} onChange={setF('minHeightNm')} aria-label="Minimum height (nm)" /></label>
        <label>to<input className="input w-24" inputMode="decimal" value={filters.maxHeightNm} onChange={setF('maxHeightNm')} aria-label="Maximum height (nm)" /></label>
        <label>Diameter from (nm)<input className="input w-24" inputMode="decimal" value={filters.minDiameterNm} onChange={setF('minDiameterNm')} aria-label="Minimum diameter (nm)" /></label>
        <label>to<input className="input w-24" inputMode="decimal" value={filters.maxDiameterNm} onChange={setF('maxDiameterNm')} aria-label="Maximum diameter (nm)" /></label>
        <label>Phenotype
          <select className="input w-auto" value={filters.phenotype} onChange={setF('phenotype')} aria-label="Phenotype">
            <option value="">all</option>
            {(q.data?.phenotypes ?? []).map((p) => <option key={p.phenotype} value={p.phenotype}>{p.phenotype} ({p.n})</option>)}
          </select>
        </label>
        <a className="btn btn-quiet ml-auto" href={`/api/vesicles/export.csv?${new URLSearchParams(Object.fromEntries([...params].filter(([k]) => !['page', 'pageSize', 'sort', 'dir'].includes(k))))}`} download>Download CSV</a>
      </div>
      {q.error && <p className="notice notice-error" role="alert">{(q.error as Error).message}</p>}
      <div className="overflow-x-auto card p-0">
        <table className="data-table w-full text-sm" data-testid="vesicle-table">
          <thead>
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => (
                  <th key={h.id} className={SORTABLE.has(h.column.id) ? 'cursor-pointer select-none' : ''} onClick={SORTABLE.has(h.column.id) ? h.column.getToggleSortingHandler() : undefined}>
                    {flexRender(h.column.columnDef.header, h.getContext())}{{ asc: ' ▲', desc: ' ▼' }[h.column.getIsSorted() as string] ?? ''}
                  </th>
                ))}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((r) => (
              <tr key={r.id} className="hover:bg-tip-50 cursor-pointer" onClick={() => focus(r.original)}>
                {r.getVisibleCells().map((c) => <td key={c.id}>{flexRender(c.column.columnDef.cell, c.getContext())}</td>)}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="flex items-center gap-3 text-sm">
        <button type="button" className="btn btn-quiet" disabled={page === 0} onClick={() => setPage(page - 1)}>Previous</button>
        <span data-testid="vesicle-count">Page {page + 1} of {pages} · {total.toLocaleString('en')} vesicles{q.isFetching ? ' · loading…' : ''}</span>
        <button type="button" className="btn btn-quiet" disabled={page + 1 >= pages} onClick={() => setPage(page + 1)}>Next</button>
      </div>
    </div>
  );
}

const client = new QueryClient({ defaultOptions: { queries: { staleTime: 10_000, retry: 1 } } });

/** The per-vesicle table of a field or a sample: server-side paging, sorting and filtering. */
export default function VesicleTable(props: Props) {
  return <QueryClientProvider client={client}><Table {...props} /></QueryClientProvider>;
}
