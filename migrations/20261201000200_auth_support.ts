import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
	// E-mail sign-in links (Auth.js verification tokens; the token is stored hashed by Auth.js).
	await knex.schema.createTable('verification_tokens', (t) => {
		t.string('identifier', 254).notNullable();
		t.string('token', 128).notNullable();
		t.timestamp('expires').notNullable();
		t.primary(['identifier', 'token']);
	});
	await knex.schema.createTable('invitations', (t) => {
		t.increments('id').primary();
		t.integer('organisation_id').unsigned().notNullable().references('organisations.id').onDelete('CASCADE');
		t.string('email', 254).notNullable();
		t.enu('role', ['admin', 'analyst', 'reviewer', 'technician']).notNullable();
		t.string('token_hash', 64).notNullable().unique();
		t.integer('invited_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('expires_at').notNullable();
		t.timestamp('accepted_at').nullable();
		t.timestamp('revoked_at').nullable();
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.index(['organisation_id', 'email']);
	});
	await knex.schema.createTable('password_resets', (t) => {
		t.increments('id').primary();
		t.integer('user_id').unsigned().notNullable().references('users.id').onDelete('CASCADE');
		t.string('token_hash', 64).notNullable().unique();
		t.timestamp('expires_at').notNullable();
		t.timestamp('used_at').nullable();
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
	});
	await knex.schema.createTable('sign_in_attempts', (t) => {
		t.bigIncrements('id').primary();
		t.string('email_key', 254).notNullable();
		t.string('ip', 64).notNullable();
		t.boolean('succeeded').notNullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.index(['email_key', 'created_at']);
		t.index(['ip', 'created_at']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('sign_in_attempts');
	await knex.schema.dropTable('password_resets');
	await knex.schema.dropTable('invitations');
	await knex.schema.dropTable('verification_tokens');
}
