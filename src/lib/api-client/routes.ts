/**
 * One function per API route an island calls. Each parses the reply with its schema from src/lib/schemas/replies
 * and takes an optional AbortSignal; failures arrive as ApiError carrying the server's { error, message }.
 */
import type { z } from 'zod';
import { api, apiBytes } from './http';
import type { FieldDetection } from '../schemas/detectionTypes';
import {
  AnyReply, AutoPairReply, CameraSavedReply, CsrfReply, EmailReply, FieldDetectionReply, FieldStatusReply, PositivitySavedReply,
  RedirectReply, RegistrationSavedReply, ReleaseReply, RelinkReply, SampleResultsReply, StudyComparisonReply, StudyCreatedReply, UsersReply,
} from '../schemas/replies';
import type { ResultSource, SampleResults, StudyComparison } from '../reporting/types';

type Signal = AbortSignal | undefined;
type Pt = { x: number; y: number };

// ---- fields
export const getFieldStatus = (fieldId: string, signal?: Signal) => api(`/api/fields/${fieldId}`, FieldStatusReply, { signal });

export const removeField = (fieldId: string, expectedVersion: number, signal?: Signal) =>
  api(`/api/fields/${fieldId}`, AnyReply, { method: 'DELETE', json: { expectedVersion }, signal });

export const retryField = (fieldId: string, signal?: Signal) => api(`/api/fields/${fieldId}/retry`, AnyReply, { method: 'POST', signal });

/** The detection stored beside the tiles; the schema checks what the islands read, the rest passes through. */
export const getFieldDetection = async (fieldId: string, signal?: Signal): Promise<FieldDetection> =>
  (await api(`/api/fields/${fieldId}/detection`, FieldDetectionReply, { signal })) as FieldDetection;

export const saveDetectionSettings = (fieldId: string, body: { settings: unknown; expectedVersion: number }, signal?: Signal) =>
  api(`/api/fields/${fieldId}/detection-settings`, AnyReply, { method: 'PUT', json: body, signal });

export const linkField = (fieldId: string, signal?: Signal) => api(`/api/fields/${fieldId}/link`, AnyReply, { method: 'POST', signal });

export const reviewField = (fieldId: string, body: { decision: 'approved' | 'sent_back'; comment: string; expectedVersion: number }, signal?: Signal) =>
  api(`/api/fields/${fieldId}/review`, AnyReply, { method: 'POST', json: body, signal });

export const proposePairs = (fieldId: string, model: 'affine' | 'similarity', signal?: Signal) =>
  api(`/api/fields/${fieldId}/registration/auto`, AutoPairReply, { method: 'POST', json: { model }, signal });

export const saveRegistration = (
  fieldId: string, body: { basedOnVersion: number; model: 'affine' | 'similarity'; pairs: { afm: Pt; fl: Pt }[] }, signal?: Signal,
) => api(`/api/fields/${fieldId}/registration`, RegistrationSavedReply, { method: 'POST', json: body, signal });

/** A layer's raw values (little-endian float32, row-major), checked against the size the caller expects. */
export async function getLayerValues(fieldId: string, layer: string, expectedLength: number | null, signal?: Signal): Promise<Float32Array> {
  const buf = await apiBytes(`/api/fields/${fieldId}/tiles/${layer}.f32`, 'application/octet-stream', { signal });
  if (expectedLength !== null && buf.byteLength !== expectedLength * 4) {
    throw new RangeError(`expected ${expectedLength * 4} bytes, got ${buf.byteLength}`);
  }
  return new Float32Array(buf);
}

// ---- studies and samples
export const createStudy = (body: { name: string; description: string }, signal?: Signal) =>
  api('/api/studies', StudyCreatedReply, { method: 'POST', json: body, signal });

export const createSample = (studyId: string, body: unknown, signal?: Signal) =>
  api(`/api/studies/${studyId}/samples`, AnyReply, { method: 'POST', json: body, signal });

export const savePanel = (studyId: string, channels: unknown[], signal?: Signal) =>
  api(`/api/studies/${studyId}/panel`, AnyReply, { method: 'PUT', json: { channels }, signal });

export const savePositivity = (studyId: string, body: { markers: unknown[] }, signal?: Signal) =>
  api(`/api/studies/${studyId}/positivity`, PositivitySavedReply, { method: 'PUT', json: body, signal });

export const relinkFields = (studyId: string, fieldIds: string[], signal?: Signal) =>
  api(`/api/studies/${studyId}/relink`, RelinkReply, { method: 'POST', json: { fieldIds }, signal });

export const saveCamera = (studyId: string, camera: Record<string, number | null> | null, signal?: Signal) =>
  api(`/api/studies/${studyId}/camera`, CameraSavedReply, { method: 'PUT', json: { camera }, signal });

export const setStudyMember = (studyId: string, userId: string, role: string | null, signal?: Signal) =>
  api(`/api/studies/${studyId}/members`, AnyReply, { method: 'PUT', json: { userId, role }, signal });

export const releaseSample = (sampleId: string, expectedVersion: number, signal?: Signal) =>
  api(`/api/samples/${sampleId}/release`, ReleaseReply, { method: 'POST', json: { expectedVersion }, signal });

/** A sample's results; the schema checks the frame of the reply, the leaves keep the shared reporting types. */
export const getSampleResults = async (sampleId: string, source: ResultSource, signal?: Signal): Promise<SampleResults> =>
  (await api(`/api/samples/${sampleId}/results?source=${source}`, SampleResultsReply, { signal })) as unknown as SampleResults;

export const getStudyComparison = async (studyId: string, query: string, signal?: Signal): Promise<StudyComparison> =>
  (await api(`/api/studies/${studyId}/comparison?${query}`, StudyComparisonReply, { signal })) as unknown as StudyComparison;

// ---- people
export type Person = z.infer<typeof UsersReply>['users'][number];

export const listUsers = (signal?: Signal) => api('/api/admin/users', UsersReply, { signal });

export const invitePerson = (body: { email: string; name: string; role: string }, signal?: Signal) =>
  api('/api/admin/invitations', EmailReply, { method: 'POST', json: body, signal });

export const changeUserRole = (userId: string, role: string, signal?: Signal) =>
  api(`/api/admin/users/${userId}`, AnyReply, { method: 'PATCH', json: { role }, signal });

export const acceptInvitation = (token: string, password: string, signal?: Signal) =>
  api('/api/invitations/accept', EmailReply, { method: 'POST', json: { token, password }, signal });

// ---- sign-in (Auth.js credentials callback)
/** Signs in; resolves to the URL Auth.js redirects to (carrying `error` and `code` when the sign-in failed). */
export async function signInWithPassword(email: string, password: string, callbackUrl: string, signal?: Signal): Promise<string> {
  const { csrfToken } = await api('/api/auth/csrf', CsrfReply, { signal });
  const { url } = await api('/api/auth/callback/credentials', RedirectReply, {
    method: 'POST',
    headers: { 'Content-Type': 'application/x-www-form-urlencoded', 'X-Auth-Return-Redirect': '1' },
    body: new URLSearchParams({ email, password, csrfToken, callbackUrl }),
    signal,
  });
  return url;
}
