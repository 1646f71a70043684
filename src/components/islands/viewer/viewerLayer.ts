/** One stored layer of a field as the viewer gets it from the page: the height map or a fluorescence channel. */
export interface ViewerLayer {
  layer: string;
  widthPx: number;
  heightPx: number;
  /** The tile set's display record (windows, tint, marker, read-out size), as stored with the tiles. */
  display: Record<string, unknown>;
}

/** A channel's marker name (CD9 ...), or the layer id when the tiles carry none. */
export const markerOf = (l: ViewerLayer) => String(l.display.marker ?? l.layer);
