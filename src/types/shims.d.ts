// Packages without type declarations.
declare module 's3rver';
declare module 'set-cookie-parser';
