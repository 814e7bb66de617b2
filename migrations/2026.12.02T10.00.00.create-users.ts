import type { Migration } from "../server/src/db/migrator.ts";

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(
      `create table users (
        id serial primary key,
        email text not null,
        name text not null,
        role text not null check (role in ('admin', 'supervisor', 'technician', 'auditor')),
        password_hash text not null,
        disabled boolean not null default false,
        created_at timestamptz not null default now(),
        updated_at timestamptz not null default now()
      )`,
      { transaction },
    );
    // E-mail addresses compare case-insensitively (sign-in, password reset).
    await sequelize.query(`create unique index users_email_key on users (lower(email))`, { transaction });
    await sequelize.query(
      `create table password_resets (
        id serial primary key,
        user_id integer not null references users(id) on delete cascade,
        token_hash text not null unique,
        expires_at timestamptz not null,
        used_at timestamptz,
        created_at timestamptz not null default now()
      )`,
      { transaction },
    );
    await sequelize.query(`create index password_resets_user_idx on password_resets (user_id)`, { transaction });
  });
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.transaction(async (transaction) => {
    await sequelize.query(`drop table password_resets`, { transaction });
    await sequelize.query(`drop table users`, { transaction });
  });
};
