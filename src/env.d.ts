/// <reference types="astro/client" />

declare namespace App {
  interface Locals {
    /** A signed-in studio member, or null. */
    member: import('./lib/server/auth').SessionMember | null;
    /** A client who entered through a viewing link, or null. */
    client: import('./lib/server/client-access').SessionClient | null;
    /** Per-request nonce for inline scripts allowed by the Content-Security-Policy. */
    cspNonce: string;
  }
}
