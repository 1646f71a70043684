import { useEffect, useState } from 'react';
import type OpenSeadragon from 'openseadragon';
import { scaleBarFor, type ScaleBar } from './scaleBar';

/** Wanted on-screen length of the viewer's scale bar (CSS pixels). */
const TARGET_PX = 120;

/**
 * The scale bar of a viewer at its current zoom, updated on every animation frame and when the image opens.
 *
 * @param viewer - the viewer (its first image gives the pixel grid)
 * @param pixelNm - size of one image pixel (nm)
 * @returns the bar, or null until the image has opened
 */
export function useScaleBar(viewer: OpenSeadragon.Viewer | null | undefined, pixelNm: number): ScaleBar | null {
  const [bar, setBar] = useState<ScaleBar | null>(null);
  useEffect(() => {
    if (!viewer) return;
    const update = () => {
      const item = viewer.world.getItemAt(0);
      if (!item) return;
      const screenPxPerImagePx = item.viewportToImageZoom(viewer.viewport.getZoom(true));
      setBar(scaleBarFor(pixelNm / 1000 / screenPxPerImagePx, TARGET_PX));
    };
    viewer.addHandler('animation', update);
    viewer.addHandler('open', update);
    // the image may have opened before these handlers were attached (the viewer is handed over a render later)
    update();
    return () => {
      viewer.removeHandler('animation', update);
      viewer.removeHandler('open', update);
    };
  }, [viewer, pixelNm]);
  return bar;
}
