import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('organisations', (t) => {
		t.increments('id').primary();
		t.string('slug', 64).notNullable().unique();
		t.string('name', 200).notNullable();
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
	});
	await knex.schema.createTable('users', (t) => {
		t.increments('id').primary();
		t.string('email', 254).notNullable().unique();
		t.string('name', 200).notNullable();
		t.string('password_hash', 100).nullable();
		t.enu('status', ['active', 'disabled']).notNullable().defaultTo('active');
		t.timestamp('email_verified_at').nullable();
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now());
	});
	await knex.schema.createTable('memberships', (t) => {
		t.increments('id').primary();
		t.integer('organisation_id').unsigned().notNullable().references('organisations.id').onDelete('CASCADE');
		t.integer('user_id').unsigned().notNullable().references('users.id').onDelete('CASCADE');
		t.enu('role', ['admin', 'analyst', 'reviewer', 'technician']).notNullable();
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.unique(['organisation_id', 'user_id']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('memberships');
	await knex.schema.dropTable('users');
	await knex.schema.dropTable('organisations');
}
