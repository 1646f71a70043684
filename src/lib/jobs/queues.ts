/** Names of the job queues kept in PostgreSQL by pg-boss. */
export const QUEUES = {
  ingestField: 'ingest-field',
  detectField: 'detect-field',
  linkField: 'link-field',
  passwordResetMail: 'password-reset-mail',
} as const;
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES];
