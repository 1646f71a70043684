import { useEffect, useRef, useState } from 'react';
import OpenSeadragon from 'openseadragon';

export interface ViewerLayer {
  layer: string;
  widthPx: number;
  heightPx: number;
  display: Record<string, unknown>;
}

interface Props {
  fieldId: string;
  layers: ViewerLayer[];
  afmPixelNm: number;
  flPixelNm: number;
}

const NICE_UM = [0.05, 0.1, 0.2, 0.25, 0.5, 1, 2, 2.5, 5, 10, 20, 25, 50, 100, 200, 500];

/** Deep-zoom viewer of one field: the height map or the fluorescence channels, with scale bar and read-out. */
export default function FieldViewer({ fieldId, layers, afmPixelNm, flPixelNm }: Props) {
  const host = useRef<HTMLDivElement>(null);
  const viewer = useRef<OpenSeadragon.Viewer | null>(null);
  const values = useRef<Record<string, Float32Array>>({});
  const height = layers.find((l) => l.layer === 'height');
  const channels = layers.filter((l) => l.layer.startsWith('ch'));
  const [mode, setMode] = useState<'height' | 'fluorescence'>(height ? 'height' : 'fluorescence');
  const [visible, setVisible] = useState<Record<string, boolean>>(Object.fromEntries(channels.map((c) => [c.layer, true])));
  const [gain, setGain] = useState<Record<string, number>>(Object.fromEntries(channels.map((c) => [c.layer, 1])));
  const [scale, setScale] = useState<{ px: number; label: string } | null>(null);
  // display only: brightness and contrast of the rendered view (the data are not changed)
  const [brightness, setBrightness] = useState(1);
  const [contrast, setContrast] = useState(1);
  const [readout, setReadout] = useState<string>('Move the pointer over the image');
  const shown = mode === 'height' ? (height ? [height] : []) : channels;
  const pixelNm = mode === 'height' ? afmPixelNm : flPixelNm;

  // values for the cursor read-out (downsampled floats, fetched once per layer)
  useEffect(() => {
    for (const l of layers) {
      if (values.current[l.layer]) continue;
      fetch(`/api/fields/${fieldId}/tiles/${l.layer}.f32`).then(async (r) => {
        if (r.ok) values.current[l.layer] = new Float32Array(await r.arrayBuffer());
      });
    }
  }, [fieldId, layers]);

  useEffect(() => {
    if (!host.current) return;
    const v = OpenSeadragon({
      element: host.current,
      tileSources: shown.map((l) => ({ tileSource: `/api/fields/${fieldId}/tiles/${l.layer}.dzi`, compositeOperation: mode === 'fluorescence' ? 'lighter' : undefined })) as never,
      showNavigationControl: false,
      showNavigator: true,
      navigatorPosition: 'BOTTOM_RIGHT',
      gestureSettingsMouse: { clickToZoom: false },
      maxZoomPixelRatio: 8,
      crossOriginPolicy: false,
      ajaxWithCredentials: true,
      immediateRender: false,
      imageSmoothingEnabled: false,
    });
    viewer.current = v;
    const updateScale = () => {
      const item = v.world.getItemAt(0);
      if (!item) return;
      const screenPerImagePx = item.viewportToImageZoom(v.viewport.getZoom(true));
      const umPerScreenPx = pixelNm / 1000 / screenPerImagePx;
      const target = 120 * umPerScreenPx;
      const um = NICE_UM.reduce((best, n) => (Math.abs(n - target) < Math.abs(best - target) ? n : best), NICE_UM[0]);
      setScale({ px: um / umPerScreenPx, label: um < 1 ? `${Math.round(um * 1000)} nm` : `${um} µm` });
    };
    v.addHandler('animation', updateScale);
    v.addHandler('open', updateScale);
    const tracker = new OpenSeadragon.MouseTracker({
      element: host.current,
      moveHandler: (e) => {
        const item = v.world.getItemAt(0);
        if (!item) return;
        const p = item.viewerElementToImageCoordinates((e as unknown as { position: OpenSeadragon.Point }).position);
        const x = p.x - 0.5;
        const y = p.y - 0.5;
        const first = shown[0];
        if (!first || x < -0.5 || y < -0.5 || x > first.widthPx - 0.5 || y > first.heightPx - 0.5) return setReadout('Outside the image');
        const pos = `x ${((x * pixelNm) / 1000).toFixed(3)} µm, y ${((y * pixelNm) / 1000).toFixed(3)} µm (pixel ${Math.round(x)}, ${Math.round(y)})`;
        const parts = shown.map((l) => {
          const vals = values.current[l.layer];
          const f = Number(l.display.valuesFactor ?? 1);
          const w = Number(l.display.valuesWidth ?? 0);
          if (!vals || !w) return null;
          const val = vals[Math.floor(Math.round(y) / f) * w + Math.floor(Math.round(x) / f)];
          return l.layer === 'height' ? `height ${val.toFixed(2)} nm` : `${String(l.display.marker ?? l.layer)} ${Math.round(val)} counts`;
        }).filter(Boolean);
        setReadout([pos, ...parts].join(' · '));
      },
    });
    return () => {
      tracker.destroy();
      v.destroy();
      viewer.current = null;
    };
  }, [fieldId, mode]);

  // a row chosen in the vesicle table: centre and zoom on it in the height map
  useEffect(() => {
    const onFocus = (e: Event) => {
      const { x, y, fieldId: f } = (e as CustomEvent<{ x: number; y: number; fieldId: string }>).detail;
      if (f !== fieldId) return;
      if (mode !== 'height') setMode('height');
      const v = viewer.current;
      const item = v?.world.getItemAt(0);
      if (!v || !item) return;
      const r = 40;
      const tl = item.imageToViewportCoordinates(x + 0.5 - r, y + 0.5 - r);
      const br = item.imageToViewportCoordinates(x + 0.5 + r, y + 0.5 + r);
      v.viewport.fitBounds(new OpenSeadragon.Rect(tl.x, tl.y, br.x - tl.x, br.y - tl.y));
      host.current?.scrollIntoView({ behavior: 'smooth', block: 'center' });
    };
    window.addEventListener('heightlight:focus-vesicle', onFocus);
    return () => window.removeEventListener('heightlight:focus-vesicle', onFocus);
  }, [fieldId, mode]);

  useEffect(() => {
    const v = viewer.current;
    if (!v || mode !== 'fluorescence') return;
    channels.forEach((c, i) => {
      const item = v.world.getItemAt(i);
      if (item) item.setOpacity(visible[c.layer] ? Math.min(1, gain[c.layer]) : 0);
    });
  }, [visible, gain, mode]);

  const colourBar = (height?.display.colourBar ?? []) as { offset: number; valueNm: number; colour: string }[];

  return (
    <div className="space-y-3">
      <div className="flex flex-wrap gap-2 items-center">
        {height && <button type="button" className={mode === 'height' ? 'btn' : 'btn btn-quiet'} onClick={() => setMode('height')}>Height map</button>}
        {channels.length > 0 && <button type="button" className={mode === 'fluorescence' ? 'btn' : 'btn btn-quiet'} onClick={() => setMode('fluorescence')}>Fluorescence</button>}
        {mode === 'fluorescence' && channels.map((c) => (
          <span key={c.layer} className="inline-flex items-center gap-2 text-sm border border-mica-200 rounded-md px-2 py-1 bg-white">
            <input type="checkbox" aria-label={`Show ${String(c.display.marker ?? c.layer)}`} checked={visible[c.layer]} onChange={(e) => setVisible({ ...visible, [c.layer]: e.target.checked })} />
            <span className="inline-block w-3 h-3 rounded-full" style={{ background: String(c.display.colour ?? '#fff') }} />
            {String(c.display.marker ?? c.layer)}
            <input type="range" min={0.1} max={1} step={0.05} value={gain[c.layer]} aria-label={`Opacity of ${String(c.display.marker ?? c.layer)}`} onChange={(e) => setGain({ ...gain, [c.layer]: Number(e.target.value) })} />
          </span>
        ))}
      </div>
      <div className="relative">
        <div ref={host} className="w-full h-[560px] bg-black rounded-lg" data-testid="field-viewer" style={{ filter: `brightness(${brightness}) contrast(${contrast})` }} />
        {scale && (
          <div className="absolute left-3 bottom-3 text-white text-xs" data-testid="scale-bar">
            <div style={{ width: scale.px }} className="h-1.5 bg-white rounded-sm" />
            <div className="mt-1 drop-shadow">{scale.label}</div>
          </div>
        )}
      </div>
      <div className="flex flex-wrap gap-4 items-center text-sm text-mica-600">
        <label className="inline-flex items-center gap-2">Brightness <input type="range" min={0.5} max={4} step={0.1} value={brightness} onChange={(e) => setBrightness(Number(e.target.value))} /></label>
        <label className="inline-flex items-center gap-2">Contrast <input type="range" min={0.5} max={3} step={0.1} value={contrast} onChange={(e) => setContrast(Number(e.target.value))} /></label>
        <button type="button" className="underline" onClick={() => { setBrightness(1); setContrast(1); }}>reset display</button>
        <span className="text-xs text-mica-400">Display only; read-outs show the stored values.</span>
      </div>
      <div className="flex flex-wrap justify-between gap-4 items-center text-sm">
        <div className="font-mono text-mica-600" data-testid="readout">{readout}</div>
        {mode === 'height' && colourBar.length > 0 && (
          <div className="flex items-center gap-2" aria-label="Height colour bar">
            <span>{colourBar[0].valueNm.toFixed(1)} nm</span>
            <div className="w-48 h-3 rounded" style={{ background: `linear-gradient(to right, ${colourBar.map((s) => `${s.colour} ${s.offset * 100}%`).join(', ')})` }} />
            <span>{colourBar[colourBar.length - 1].valueNm.toFixed(1)} nm</span>
          </div>
        )}
      </div>
    </div>
  );
}
