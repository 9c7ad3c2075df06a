/**
 * Local S3-compatible object store (s3rver) with Fillcard's bucket and a CORS rule for the app's
 * origin, so the browser can upload straight to storage as it would against a real store.
 * Usage: tsx scripts/stand-ins/object-store.ts <port> <directory> <bucket> <origin>[,origin…]
 */
import S3rver from 's3rver';

const [port, directory, bucket, origins] = process.argv.slice(2);
if (!port || !directory || !bucket || !origins) {
  console.error('usage: object-store.ts <port> <directory> <bucket> <origins>');
  process.exit(2);
}

const allowed = origins.split(',').map((o) => `<AllowedOrigin>${o}</AllowedOrigin>`).join('');
const cors = `<CORSConfiguration><CORSRule>${allowed}
  <AllowedMethod>GET</AllowedMethod><AllowedMethod>PUT</AllowedMethod>
  <AllowedMethod>POST</AllowedMethod><AllowedMethod>DELETE</AllowedMethod><AllowedMethod>HEAD</AllowedMethod>
  <AllowedHeader>*</AllowedHeader><ExposeHeader>ETag</ExposeHeader><MaxAgeSeconds>3000</MaxAgeSeconds>
</CORSRule></CORSConfiguration>`;

const server = new S3rver({
  port: Number(port),
  address: '127.0.0.1',
  directory,
  silent: true,
  vhostBuckets: false,
  configureBuckets: [{ name: bucket, configs: [cors] }],
});

await server.run();
console.log(`object store ready on 127.0.0.1:${port}`);
const stop = () => server.close().finally(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
