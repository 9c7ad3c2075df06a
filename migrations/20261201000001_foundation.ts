import type { Knex } from 'knex';

/**
 * Fillcard's data model. Every row that belongs to a studio carries studio_id, so each query can be
 * scoped by tenant without a join. Money is integer minor units with an ISO 4217 code.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE studios (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      name text NOT NULL CHECK (length(name) BETWEEN 1 AND 120),
      contact_email text,
      contact_phone text,
      brand_colour text NOT NULL DEFAULT '#a4492b' CHECK (brand_colour ~ '^#[0-9a-f]{6}$'),
      watermark_text text NOT NULL DEFAULT 'PROOF',
      watermark_logo_key text,
      watermark_opacity numeric(3,2) NOT NULL DEFAULT 0.35 CHECK (watermark_opacity BETWEEN 0.05 AND 0.9),
      default_allowance integer NOT NULL DEFAULT 10 CHECK (default_allowance >= 0),
      default_extra_price_minor integer NOT NULL DEFAULT 2500 CHECK (default_extra_price_minor >= 0),
      default_currency char(3) NOT NULL DEFAULT 'EUR' CHECK (default_currency ~ '^[A-Z]{3}$'),
      tax_rate_bp integer NOT NULL DEFAULT 0 CHECK (tax_rate_bp BETWEEN 0 AND 10000),
      tax_mode text NOT NULL DEFAULT 'exclusive' CHECK (tax_mode IN ('exclusive', 'inclusive')),
      proof_expiry_days integer NOT NULL DEFAULT 30 CHECK (proof_expiry_days BETWEEN 1 AND 365),
      download_expiry_days integer NOT NULL DEFAULT 60 CHECK (download_expiry_days BETWEEN 1 AND 730),
      retention_days integer NOT NULL DEFAULT 365 CHECK (retention_days BETWEEN 30 AND 3650),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE users (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      email text NOT NULL CHECK (email = lower(email) AND length(email) <= 254),
      name text NOT NULL CHECK (length(name) BETWEEN 1 AND 120),
      password_hash text,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE UNIQUE INDEX users_email_key ON users (email);

    CREATE TABLE memberships (
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      role text NOT NULL CHECK (role IN ('owner', 'retoucher')),
      created_at timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (studio_id, user_id)
    );
    CREATE INDEX memberships_user_idx ON memberships (user_id);

    -- Lucia's session table for studio members.
    CREATE TABLE auth_sessions (
      id text PRIMARY KEY,
      user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      expires_at timestamptz NOT NULL
    );
    CREATE INDEX auth_sessions_user_idx ON auth_sessions (user_id);

    CREATE TABLE invites (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      email text NOT NULL CHECK (email = lower(email)),
      role text NOT NULL DEFAULT 'retoucher' CHECK (role IN ('owner', 'retoucher')),
      token_hash text NOT NULL UNIQUE,
      invited_by uuid REFERENCES users(id) ON DELETE SET NULL,
      expires_at timestamptz NOT NULL,
      accepted_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX invites_studio_idx ON invites (studio_id, created_at DESC);

    CREATE TABLE clients (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      name text NOT NULL CHECK (length(name) BETWEEN 1 AND 120),
      email text NOT NULL CHECK (email = lower(email) AND length(email) <= 254),
      phone text,
      notes text,
      archived_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX clients_studio_idx ON clients (studio_id, name);

    CREATE TABLE shoots (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      client_id uuid NOT NULL REFERENCES clients(id) ON DELETE RESTRICT,
      title text NOT NULL CHECK (length(title) BETWEEN 1 AND 160),
      shot_on date NOT NULL,
      stage text NOT NULL DEFAULT 'draft'
        CHECK (stage IN ('draft', 'proofing', 'picks_in', 'retouching', 'delivered', 'archived')),
      allowance integer NOT NULL CHECK (allowance >= 0),
      extra_price_minor integer NOT NULL CHECK (extra_price_minor >= 0),
      currency char(3) NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
      tax_rate_bp integer NOT NULL DEFAULT 0 CHECK (tax_rate_bp BETWEEN 0 AND 10000),
      tax_mode text NOT NULL DEFAULT 'exclusive' CHECK (tax_mode IN ('exclusive', 'inclusive')),
      proof_expires_at timestamptz NOT NULL,
      download_until timestamptz,
      link_token_hash text UNIQUE,
      link_sent_at timestamptz,
      link_revoked_at timestamptz,
      passcode_hash text,
      picks_submitted_at timestamptz,
      light_notes jsonb NOT NULL DEFAULT '{}'::jsonb,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX shoots_studio_stage_idx ON shoots (studio_id, stage);
    CREATE INDEX shoots_studio_date_idx ON shoots (studio_id, shot_on DESC);
    CREATE INDEX shoots_client_idx ON shoots (client_id);

    -- Lucia's session table for clients entering by viewing link: reaches one shoot only.
    CREATE TABLE client_sessions (
      id text PRIMARY KEY,
      user_id uuid NOT NULL REFERENCES clients(id) ON DELETE CASCADE,
      shoot_id uuid NOT NULL REFERENCES shoots(id) ON DELETE CASCADE,
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      passcode_ok boolean NOT NULL DEFAULT false,
      expires_at timestamptz NOT NULL
    );
    CREATE INDEX client_sessions_shoot_idx ON client_sessions (shoot_id);

    CREATE TABLE frames (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      shoot_id uuid NOT NULL REFERENCES shoots(id) ON DELETE CASCADE,
      object_key text NOT NULL UNIQUE,
      original_name text NOT NULL CHECK (length(original_name) <= 255),
      bytes bigint NOT NULL CHECK (bytes > 0),
      sha256 text CHECK (sha256 ~ '^[0-9a-f]{64}$'),
      width integer, height integer, orientation smallint CHECK (orientation BETWEEN 1 AND 8),
      state text NOT NULL DEFAULT 'waiting' CHECK (state IN ('waiting', 'processing', 'ready', 'failed')),
      error text,
      hidden boolean NOT NULL DEFAULT false,
      camera_make text, camera_model text, lens text,
      focal_length_mm numeric(7,2), focal_length_35mm numeric(7,2),
      f_number numeric(5,2), exposure_time_s double precision, iso integer,
      exposure_bias_ev numeric(5,2), flash_fired boolean,
      taken_at timestamptz, taken_at_offset text,
      ev100 double precision,
      mean_luminance double precision, clipped_share double precision, sharpness double precision,
      phash text CHECK (phash ~ '^[0-9a-f]{16}$'),
      focus_x double precision CHECK (focus_x BETWEEN 0 AND 1),
      focus_y double precision CHECK (focus_y BETWEEN 0 AND 1),
      created_at timestamptz NOT NULL DEFAULT now(),
      processed_at timestamptz
    );
    CREATE INDEX frames_shoot_order_idx ON frames (shoot_id, taken_at, original_name);
    CREATE INDEX frames_shoot_state_idx ON frames (shoot_id, state);
    CREATE UNIQUE INDEX frames_shoot_sha_key ON frames (shoot_id, sha256);

    CREATE TABLE frame_variants (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      frame_id uuid NOT NULL REFERENCES frames(id) ON DELETE CASCADE,
      kind text NOT NULL CHECK (kind IN ('thumb', 'proof', 'crop_4x5', 'crop_1x1', 'crop_9x16')),
      object_key text NOT NULL,
      width integer NOT NULL, height integer NOT NULL, bytes integer NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (frame_id, kind)
    );

    CREATE TABLE picks (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      shoot_id uuid NOT NULL REFERENCES shoots(id) ON DELETE CASCADE,
      frame_id uuid NOT NULL UNIQUE REFERENCES frames(id) ON DELETE CASCADE,
      note text NOT NULL DEFAULT '' CHECK (length(note) <= 1000),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX picks_shoot_idx ON picks (shoot_id);

    CREATE TABLE orders (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      shoot_id uuid NOT NULL REFERENCES shoots(id) ON DELETE CASCADE,
      extras integer NOT NULL CHECK (extras > 0),
      unit_price_minor integer NOT NULL CHECK (unit_price_minor >= 0),
      net_minor integer NOT NULL CHECK (net_minor >= 0),
      tax_minor integer NOT NULL CHECK (tax_minor >= 0),
      total_minor integer NOT NULL CHECK (total_minor >= 0),
      currency char(3) NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
      tax_rate_bp integer NOT NULL CHECK (tax_rate_bp BETWEEN 0 AND 10000),
      tax_mode text NOT NULL CHECK (tax_mode IN ('exclusive', 'inclusive')),
      state text NOT NULL DEFAULT 'pending' CHECK (state IN ('pending', 'paid', 'expired', 'refunded')),
      checkout_session_id text UNIQUE,
      checkout_url text,
      client_email text,
      paid_at timestamptz, refunded_at timestamptz, refund_id text,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX orders_shoot_idx ON orders (shoot_id, created_at DESC);
    CREATE INDEX orders_studio_idx ON orders (studio_id, created_at DESC);

    CREATE TABLE payment_events (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      provider_event_id text NOT NULL UNIQUE,
      type text NOT NULL,
      order_id uuid REFERENCES orders(id) ON DELETE SET NULL,
      studio_id uuid REFERENCES studios(id) ON DELETE CASCADE,
      payload jsonb NOT NULL,
      received_at timestamptz NOT NULL DEFAULT now(),
      processed_at timestamptz
    );

    CREATE TABLE finals (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      shoot_id uuid NOT NULL REFERENCES shoots(id) ON DELETE CASCADE,
      frame_id uuid REFERENCES frames(id) ON DELETE CASCADE,
      object_key text NOT NULL UNIQUE,
      original_name text NOT NULL CHECK (length(original_name) <= 255),
      bytes bigint NOT NULL CHECK (bytes > 0),
      width integer, height integer,
      state text NOT NULL DEFAULT 'waiting' CHECK (state IN ('waiting', 'processing', 'ready', 'failed')),
      error text,
      superseded_at timestamptz,
      uploaded_by uuid REFERENCES users(id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX finals_shoot_idx ON finals (shoot_id, created_at);
    CREATE UNIQUE INDEX finals_current_per_frame ON finals (frame_id) WHERE superseded_at IS NULL AND frame_id IS NOT NULL;

    CREATE TABLE final_variants (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      final_id uuid NOT NULL REFERENCES finals(id) ON DELETE CASCADE,
      kind text NOT NULL CHECK (kind IN ('full', 'crop_4x5', 'crop_1x1', 'crop_9x16', 'print_8x10')),
      object_key text NOT NULL,
      width integer NOT NULL, height integer NOT NULL, bytes bigint NOT NULL,
      UNIQUE (final_id, kind)
    );

    CREATE TABLE downloads (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      shoot_id uuid NOT NULL REFERENCES shoots(id) ON DELETE CASCADE,
      final_id uuid REFERENCES finals(id) ON DELETE SET NULL,
      what text NOT NULL CHECK (what IN ('final', 'crop', 'finals_zip', 'crops_zip', 'original')),
      actor_kind text NOT NULL CHECK (actor_kind IN ('client', 'member')),
      actor_id uuid,
      ip text, user_agent text,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX downloads_shoot_idx ON downloads (shoot_id, created_at DESC);

    CREATE TABLE audit_log (
      id bigserial PRIMARY KEY,
      studio_id uuid NOT NULL REFERENCES studios(id) ON DELETE CASCADE,
      actor_kind text NOT NULL CHECK (actor_kind IN ('member', 'client', 'system')),
      actor_id uuid,
      action text NOT NULL,
      subject_type text, subject_id uuid,
      details jsonb NOT NULL DEFAULT '{}'::jsonb,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX audit_log_studio_idx ON audit_log (studio_id, created_at DESC);

    -- E-mail outbox: a row is written in the same transaction as the change it reports, then sent
    -- by the worker; if SMTP is down the row waits and is retried.
    CREATE TABLE mail_outbox (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid REFERENCES studios(id) ON DELETE CASCADE,
      to_address text NOT NULL,
      subject text NOT NULL,
      html text NOT NULL,
      text text NOT NULL,
      state text NOT NULL DEFAULT 'queued' CHECK (state IN ('queued', 'sent', 'failed')),
      attempts integer NOT NULL DEFAULT 0,
      last_error text,
      created_at timestamptz NOT NULL DEFAULT now(),
      sent_at timestamptz
    );
    CREATE INDEX mail_outbox_state_idx ON mail_outbox (state, created_at);

    CREATE TABLE rate_limits (
      key text PRIMARY KEY,
      hits integer NOT NULL,
      window_started_at timestamptz NOT NULL
    );
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    DROP TABLE IF EXISTS rate_limits, mail_outbox, audit_log, downloads, final_variants, finals,
      payment_events, orders, picks, frame_variants, frames, client_sessions, shoots, clients,
      invites, auth_sessions, memberships, users, studios CASCADE;
  `);
}
