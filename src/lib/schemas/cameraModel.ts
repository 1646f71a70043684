import './zodConfig';
/**
 * The study's camera noise model as an analyst sets it (raw counts): a pixel holding N photons reads
 * offset + gain·N, with Gaussian read noise. Either all three values or none (none = estimated from each frame).
 * Pure: shared by the route and the form island.
 */
import { z } from 'zod';

const num = (what: string) => z.number({ error: `${what} must be a number` }).finite(`${what} must be a finite number`);

export const CameraModelSetting = z.object({
  /** Counts a dark pixel reads (bias); 16-bit cameras write 0–65535. */
  offsetCounts: num('Offset (counts)').min(0, 'Offset (counts) cannot be negative').max(65535, 'Offset (counts) must be at most 65 535 (a 16-bit frame)'),
  /** Counts per detected photon; 1 for a camera that reports photo-electrons. */
  gainCountsPerPhoton: num('Gain (counts per photon)').positive('Gain (counts per photon) must be above 0').max(1000, 'Gain (counts per photon) must be at most 1000'),
  /** RMS read noise (counts). */
  readNoiseCounts: num('Read noise (counts)').min(0, 'Read noise (counts) cannot be negative').max(1000, 'Read noise (counts) must be at most 1000'),
}).strict();
export type CameraModelSetting = z.infer<typeof CameraModelSetting>;

/** Body of PUT /api/studies/:id/camera: the model, or null to estimate it from the frames. */
export const CameraModelRequest = z.object({ camera: CameraModelSetting.nullable() }).strict();
export type CameraModelRequest = z.infer<typeof CameraModelRequest>;
