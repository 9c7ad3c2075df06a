import { all, clientApi, memberApi, type Row } from './types';

/** Payments: checkout and its status (client of the shoot), the provider's webhook, refunds (owners), the return page. */
const NO_SUCH_ORDER = '00000000-0000-4000-8000-000000000000';

export const rows: Record<string, Row[]> = {
  'api/gallery/[shootId]/checkout': [
    // Client A has sent no picks yet, so there is nothing to pay: 409 for them, 401 for everyone else.
    { method: 'POST', path: (w) => `/api/gallery/${w.shootA}/checkout`, body: () => ({}), expect: clientApi(409) },
    { method: 'GET', path: (w) => `/api/gallery/${w.shootA}/checkout`, expect: clientApi(200) },
    { method: 'POST', path: (w) => `/api/gallery/${w.shootOther}/checkout`, body: () => ({}), expect: all(401) },
  ],
  // Anyone may knock; without a valid signature the answer is 400 and nothing happens.
  'api/payments/webhook': [
    { method: 'POST', path: () => '/api/payments/webhook', body: () => ({ id: 'evt_unsigned', type: 'checkout.session.completed' }), expect: all(400) },
  ],
  'api/orders/[orderId]/refund': [
    { method: 'POST', path: () => `/api/orders/${NO_SUCH_ORDER}/refund`, body: () => ({}), expect: memberApi(404, 403, 404) },
    { method: 'POST', path: () => '/api/orders/not-an-id/refund', body: () => ({}), expect: memberApi(404, 403, 404) },
  ],
  'gallery/[shootId]/payment': [
    { method: 'GET', path: (w) => `/gallery/${w.shootA}/payment?cancelled=1`, expect: { ...all(401), clientA: 200 } },
    { method: 'GET', path: (w) => `/gallery/${w.shootOther}/payment`, expect: all(401) },
  ],
};
