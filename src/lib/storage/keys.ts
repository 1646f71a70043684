/**
 * Object keys, always made by the server from ids (never from a file name), so a name like
 * "../../x" cannot reach another object.
 */
const ID = /^[0-9a-f-]{36}$/;

function checkId(id: string, what: string) {
  if (!ID.test(id)) throw new TypeError(`${what} must be a UUID, got ${JSON.stringify(id)}`);
}

/** Where a just-uploaded, not yet confirmed file lives. */
export function stagingKey(userId: string, uploadId: string): string {
  checkId(userId, 'userId');
  checkId(uploadId, 'uploadId');
  return `staging/${userId}/${uploadId}.tif`;
}

/**
 * The copy of a staged file made when it is first inspected: what was inspected is what a field gets. No
 * presigned URL names this key (each is bound to its own key), so only the app writes it.
 */
export function inspectedKey(userId: string, uploadId: string): string {
  return stagingKey(userId, uploadId).replace(/\.tif$/, '.inspected.tif');
}

/** Where a confirmed raw file of a field lives. */
export function rawFileKey(fieldId: string, fileId: string): string {
  checkId(fieldId, 'fieldId');
  checkId(fileId, 'fileId');
  return `fields/${fieldId}/raw/${fileId}.tif`;
}

/** Prefix of a field's rendered tile pyramid for one layer ("height", "ch0", ...). */
export function tilePrefix(fieldId: string, layer: string): string {
  checkId(fieldId, 'fieldId');
  if (!/^(height|ch\d{1,2})$/.test(layer)) throw new TypeError(`unknown layer ${JSON.stringify(layer)}`);
  return `fields/${fieldId}/tiles/${layer}`;
}

/** Where a field's detection results (vesicles, fiducial candidates, spots) are kept as JSON. */
export function detectionKey(fieldId: string): string {
  checkId(fieldId, 'fieldId');
  return `fields/${fieldId}/detection.json`;
}

export const fieldPrefix = (fieldId: string) => {
  checkId(fieldId, 'fieldId');
  return `fields/${fieldId}/`;
};
