import type { Knex } from 'knex';

/**
 * What paying for extra retouches needs beyond the first data model: the payment's id at the
 * provider (refunds name it), the attempt number (each try after a decline or expiry is a new
 * order, so the provider's idempotency key never hands back a dead session), how much was refunded,
 * and a `failed` state for an order whose payment page could not be opened.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE orders
      ADD COLUMN payment_intent_id text,
      ADD COLUMN attempt integer NOT NULL DEFAULT 1 CHECK (attempt >= 1),
      ADD COLUMN refunded_minor integer NOT NULL DEFAULT 0 CHECK (refunded_minor >= 0),
      ADD COLUMN failure text CHECK (length(failure) <= 500),
      ADD CONSTRAINT orders_refund_within_total CHECK (refunded_minor <= total_minor),
      ADD CONSTRAINT orders_figures_add_up CHECK (net_minor + tax_minor = total_minor);

    ALTER TABLE orders DROP CONSTRAINT orders_state_check;
    ALTER TABLE orders ADD CONSTRAINT orders_state_check
      CHECK (state IN ('pending', 'paid', 'expired', 'refunded', 'failed'));

    -- At most one order waits for payment per shoot: two checkout requests at once share it.
    CREATE UNIQUE INDEX orders_one_pending_per_shoot ON orders (shoot_id) WHERE state = 'pending';
    CREATE UNIQUE INDEX orders_shoot_attempt_key ON orders (shoot_id, attempt);
    CREATE INDEX orders_payment_intent_idx ON orders (payment_intent_id) WHERE payment_intent_id IS NOT NULL;
    CREATE INDEX payment_events_order_idx ON payment_events (order_id);
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    DROP INDEX IF EXISTS payment_events_order_idx;
    DROP INDEX IF EXISTS orders_payment_intent_idx;
    DROP INDEX IF EXISTS orders_shoot_attempt_key;
    DROP INDEX IF EXISTS orders_one_pending_per_shoot;
    UPDATE orders SET state = 'expired' WHERE state = 'failed';
    ALTER TABLE orders DROP CONSTRAINT orders_state_check;
    ALTER TABLE orders ADD CONSTRAINT orders_state_check CHECK (state IN ('pending', 'paid', 'expired', 'refunded'));
    ALTER TABLE orders
      DROP CONSTRAINT orders_figures_add_up,
      DROP CONSTRAINT orders_refund_within_total,
      DROP COLUMN failure,
      DROP COLUMN refunded_minor,
      DROP COLUMN attempt,
      DROP COLUMN payment_intent_id;
  `);
}
