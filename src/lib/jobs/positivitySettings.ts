// The contract moved to src/lib/schemas (islands read it too); kept here for the server code that imports it.
export * from '../schemas/positivitySettings';
