/** Limits shared by islands and routes (no server imports here). */
export const MIN_PASSWORD_LENGTH_CLIENT = 10;
