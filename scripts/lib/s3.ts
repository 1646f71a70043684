/** The local S3 fake (s3rver) on 127.0.0.1, with a bucket whose CORS rules allow presigned PUTs from the app. */
import S3rver from 's3rver';
import { mkdirSync } from 'node:fs';

const corsXml = (origin: string) => `<CORSConfiguration>
  <CORSRule>
    <AllowedOrigin>${origin}</AllowedOrigin>
    <AllowedMethod>GET</AllowedMethod>
    <AllowedMethod>PUT</AllowedMethod>
    <AllowedMethod>HEAD</AllowedMethod>
    <AllowedHeader>*</AllowedHeader>
    <ExposeHeader>ETag</ExposeHeader>
    <MaxAgeSeconds>3000</MaxAgeSeconds>
  </CORSRule>
</CORSConfiguration>`;

export async function startS3(opts: { port: number; directory: string; bucket: string; appOrigin: string }) {
  mkdirSync(opts.directory, { recursive: true });
  const server = new S3rver({
    port: opts.port,
    address: '127.0.0.1',
    directory: opts.directory,
    silent: true,
    configureBuckets: [{ name: opts.bucket, configs: [corsXml(opts.appOrigin)] }],
  });
  await server.run();
  return { stop: () => server.close() };
}
