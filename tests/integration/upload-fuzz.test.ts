/**
 * Mutated TIFFs (bit flips, truncation, huge sizes, wrong offsets, cyclic IFDs, unknown compression)
 * through the real upload path over HTTP: presigned PUT to s3rver, then the server's inspection.
 * Each is read or refused with a 4xx and a message; none takes the server down or answers 5xx.
 * The in-process fuzz (src/lib/imaging/__tests__/fuzz.test.ts) runs thousands more of the same mutations.
 */
import { describe, expect } from 'vitest';
import type { AppClient } from '../support/client';
import { baseFiles, mutate } from '../../src/lib/imaging/__tests__/fuzzCases';
import { test, it } from '../support/fixtures';

const CASES = Number(process.env.UPLOAD_FUZZ_CASES ?? 120);
let bio: AppClient;
let studyId: string;

test.beforeAll(async ({ signedIn }) => {
  bio = await signedIn('biologist');
  studyId = (await (await bio.fetch('/api/studies')).json()).studies[0].id;
});

describe('hostile files through the upload path', () => {
  it(`${CASES} mutated files are each read or refused with a 4xx and a message`, async () => {
    const bases = baseFiles();
    const outcomes = { read: 0, refused: 0 };
    for (let i = 0; i < CASES; i++) {
      const { file } = mutate(bases[i % bases.length], 9000 + i);
      const presign = await bio.json('/api/uploads', 'POST', { studyId, fileName: `fuzz-${i}.tif`, sizeBytes: Math.max(1, file.length) });
      if (presign.status === 400) continue; // an empty file is refused before upload
      const { uploadId, url } = await presign.json();
      await fetch(url, { method: 'PUT', body: Buffer.from(file), headers: { 'content-type': 'image/tiff' } });
      // no speed assertion (timings belong to benchmarks): an inspection that hung would run into the test's time-out
      const res = await bio.json(`/api/uploads/${uploadId}/inspect`, 'POST', {});
      const body = await res.json();
      if (res.status === 200) {
        outcomes.read++;
        expect(body.widthPx).toBeGreaterThan(0);
      } else {
        outcomes.refused++;
        expect(res.status, JSON.stringify(body)).toBeGreaterThanOrEqual(400);
        expect(res.status).toBeLessThan(500);
        expect(body.message.length).toBeGreaterThan(15);
        expect(JSON.stringify(body)).not.toMatch(/node_modules|at Object\.|\/work\//);
      }
    }
    expect(outcomes.read + outcomes.refused).toBeGreaterThan(CASES * 0.9);
    expect(outcomes.refused).toBeGreaterThan(0);
    // the server is still answering
    expect((await bio.fetch('/api/me')).status).toBe(200);
  });
});
