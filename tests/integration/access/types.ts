/** Shared shapes for the access matrix: each area of Fillcard keeps its rows in a rows-*.ts file here. */
export type Principal = 'anonymous' | 'clientA' | 'clientB' | 'ownerA' | 'retoucherA' | 'ownerB' | 'signedOut' | 'expiredClient';
export const PRINCIPALS: Principal[] = ['anonymous', 'clientA', 'clientB', 'ownerA', 'retoucherA', 'ownerB', 'signedOut', 'expiredClient'];

export interface World {
  shootA: string;
  shootB: string;
  shootOther: string; // a shoot of studio B
  tokenA: string;
  clientA: string; // the client of shoot A
  studioA: string;
  frameA: string; // a failed frame of shoot A whose original is no longer in storage
  frameLocked: string; // a ready frame of studio A's shoot whose picks are in (it can no longer be removed)
  frameOther: string; // a failed frame of shootOther (studio B)
  variantThumbA: string; // the thumbnail of a ready frame of shoot B (studio A)
  variantCropA: string; // a ratio crop of the same frame (studio only until hand-off)
  shootArchived: string; // an archived shoot of studio A (finals, hand-off and archive refuse it harmlessly)
}

export interface Row {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  path: (w: World) => string;
  body?: (w: World) => unknown;
  form?: boolean;
  expect: Record<Principal, number>;
}

export const all = (status: number): Record<Principal, number> => Object.fromEntries(PRINCIPALS.map((p) => [p, status])) as Record<Principal, number>;
/** Pages a member sees, others are sent to sign in. */
export const memberPage = (ownerOnly: boolean): Record<Principal, number> => ({
  ...all(302), ownerA: 200, ownerB: 200, retoucherA: ownerOnly ? 403 : 200,
});


/** A member-only API: 401 for everyone else, `owner`/`retoucher` as given for studio A, 404 for studio B (its ids look missing). */
export const memberApi = (owner: number, retoucher: number, ownerB = 404): Record<Principal, number> => ({
  ...all(401), ownerA: owner, retoucherA: retoucher, ownerB,
});
/** A client API of shoot A: only client A gets `ok`. */
export const clientApi = (ok: number): Record<Principal, number> => ({
  ...all(401), clientA: ok, clientB: 401, expiredClient: 401,
});
