import { useRef } from 'react';
import { useCssVariables } from '../useCssVariables';

/** The parts of the deep-zoom viewer's box whose look changes at run time: each is set through CSS variables. */

export interface LayerHostProps {
  hostRef: (el: HTMLDivElement | null) => void;
  layer: string;
  /** The leader is on top and takes the pointer; the followers only draw. */
  leader: boolean;
  /** Channels add up on screen. */
  additive: boolean;
  opacity: number;
  /** CSS filter of the layer's display settings ('none' while it shows the tiles as rendered). */
  filter: string;
}

/** The box one layer's viewer draws in; its opacity and filter change at run time, so they go in as CSS variables. */
export function LayerHost({ hostRef, layer, leader, additive, opacity, filter }: LayerHostProps) {
  const el = useRef<HTMLDivElement>(null);
  useCssVariables(el, { '--layer-opacity': opacity, '--layer-filter': filter });
  return (
    <div
      ref={(node) => {
        el.current = node;
        hostRef(node);
      }}
      className={`absolute inset-0 opacity-(--layer-opacity) filter-(--layer-filter) ${leader ? 'z-10' : 'z-[1] pointer-events-none'} ${additive ? 'mix-blend-plus-lighter' : ''}`}
      data-testid={`viewer-layer-${layer}`}
      data-layer={layer}
    />
  );
}

/** The bar of the scale bar, `px` screen pixels long. */
export function ScaleBarLine({ px }: { px: number }) {
  const el = useRef<HTMLDivElement>(null);
  useCssVariables(el, { '--scale-bar-width': `${px}px` });
  return <div ref={el} className="w-(--scale-bar-width) h-1.5 bg-white rounded-sm" />;
}

/** The height colour bar: the tiles' colour stops, through the same display filter as the map. */
export function ColourBar({ filter, gradient }: { filter: string; gradient: string }) {
  const el = useRef<HTMLDivElement>(null);
  useCssVariables(el, { '--colour-bar-filter': filter, '--colour-bar': gradient });
  return <div ref={el} className="w-48 h-3 rounded filter-(--colour-bar-filter) bg-(image:--colour-bar)" />;
}
