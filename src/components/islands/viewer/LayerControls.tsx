import { useRef, type InputHTMLAttributes } from 'react';
import {
  DEFAULT_HEIGHT_DISPLAY, channelRange, formatCounts, parseTint, storedWindow, toHex, fromHex, type ChannelDisplay, type HeightDisplay,
} from './layerDisplay';
import { markerOf, type ViewerLayer } from './viewerLayer';
import { useCssVariables } from '../useCssVariables';

/** The display controls under the viewer: one row per shown layer (display only; the data are not changed). */

const ROW = 'grid grid-cols-[8rem_4.5rem_minmax(0,1fr)_minmax(0,1.3fr)_minmax(0,1.3fr)_auto] items-center gap-x-5 px-3 py-2';

/** A labelled slider with its current value (and unit) above it. */
function Slider({ label, shows, valueTestId, ...input }: { label: string; shows: string; valueTestId?: string } & InputHTMLAttributes<HTMLInputElement>) {
  return (
    <label className="block min-w-0">
      <span className="flex justify-between gap-2 text-xs text-mica-600">
        <span>{label}</span>
        <span className="tabular-nums text-mica-800" data-testid={valueTestId}>{shows}</span>
      </span>
      <input type="range" className="w-full accent-tip-600" {...input} />
    </label>
  );
}

export function HeightRow({ display, onChange }: { display: HeightDisplay; onChange: (d: HeightDisplay) => void }) {
  return (
    <div className={ROW} data-testid="layer-controls-height">
      <span className="font-medium text-mica-800">Height map</span>
      <span />
      <Slider label="Brightness" shows={`${display.brightnessPct} %`} min={50} max={300} step={5} value={display.brightnessPct}
        aria-label="Brightness of the height map" onChange={(e) => onChange({ ...display, brightnessPct: Number(e.target.value) })} />
      <Slider label="Contrast" shows={`${display.contrastPct} %`} min={50} max={300} step={5} value={display.contrastPct}
        aria-label="Contrast of the height map" onChange={(e) => onChange({ ...display, contrastPct: Number(e.target.value) })} />
      <span />
      <button type="button" className="btn btn-quiet" aria-label="Reset height map display" onClick={() => onChange(DEFAULT_HEIGHT_DISPLAY)}>Reset</button>
    </div>
  );
}

export interface ChannelRowProps {
  layer: ViewerLayer;
  visible: boolean;
  onVisible: (on: boolean) => void;
  opacity: number;
  onOpacity: (o: number) => void;
  display: ChannelDisplay | undefined;
  onDisplay: (which: 'black' | 'white', counts: number) => void;
  onColour: (colour: [number, number, number]) => void;
  onReset: () => void;
}

export function ChannelRow({ layer, visible, onVisible, opacity, onOpacity, display, onDisplay, onColour, onReset }: ChannelRowProps) {
  const name = markerOf(layer);
  const w = storedWindow(layer.display);
  const range = w ? channelRange(w) : null;
  const tint = parseTint(layer.display.colour);
  return (
    <div className={ROW} data-testid={`layer-controls-${layer.layer}`}>
      <label className="inline-flex items-center gap-2 font-medium text-mica-800">
        <input type="checkbox" className="accent-tip-600" aria-label={`Show ${name}`} checked={visible} onChange={(e) => onVisible(e.target.checked)} />
        {name}
      </label>
      {tint && display ? (
        <label className="inline-flex items-center gap-1.5 text-xs text-mica-600" title="Display colour (screen only)">
          <input type="color" className="w-7 h-6 p-0 border border-mica-200 rounded cursor-pointer bg-white" aria-label={`Colour of ${name}`}
            value={toHex(display.colour ?? tint)} onChange={(e) => { const c = fromHex(e.target.value); if (c) onColour(c); }} />
          colour
        </label>
      ) : (
        <Swatch colour={String(layer.display.colour ?? '#fff')} />
      )}
      <Slider label="Opacity" shows={`${Math.round(opacity * 100)} %`} min={0.1} max={1} step={0.05} value={opacity}
        aria-label={`Opacity of ${name}`} onChange={(e) => onOpacity(Number(e.target.value))} />
      {range && display ? (
        <>
          <Slider label="Black at" shows={formatCounts(display.blackCounts)} valueTestId={`black-${layer.layer}`} min={range.min} max={range.max} step={range.step}
            value={display.blackCounts} aria-label={`Black level of ${name}`} onChange={(e) => onDisplay('black', Number(e.target.value))} />
          <Slider label="Full colour at" shows={formatCounts(display.whiteCounts)} valueTestId={`white-${layer.layer}`} min={range.min} max={range.max} step={range.step}
            value={display.whiteCounts} aria-label={`Full colour level of ${name}`} onChange={(e) => onDisplay('white', Number(e.target.value))} />
        </>
      ) : (
        <span className="col-span-2 text-xs text-mica-400">Levels appear once the field has been processed again.</span>
      )}
      <button type="button" className="btn btn-quiet" aria-label={`Reset display of ${name}`} onClick={onReset}>Reset</button>
    </div>
  );
}

/** A channel's colour dot (the colour comes from the data). */
function Swatch({ colour }: { colour: string }) {
  const el = useRef<HTMLSpanElement>(null);
  useCssVariables(el, { '--swatch': colour });
  return <span ref={el} className="inline-block w-3 h-3 rounded-full bg-(--swatch)" />;
}
