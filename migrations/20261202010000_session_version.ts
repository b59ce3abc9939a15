import type { Knex } from 'knex';

/**
 * Revocable sessions and bounded mail: a per-user session version that every session carries and
 * every request compares (raising it ends all of the user's sessions); outbox bodies may be cleared
 * once sent; sign-in throttling looks up (e-mail, address) pairs.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('users', (t) => {
		t.integer('session_version').unsigned().notNullable().defaultTo(0);
	});
	await knex.schema.alterTable('outbox_messages', (t) => {
		t.text('text_body').nullable().alter();
		t.index(['status', 'created_at'], 'outbox_messages_status_created_index');
	});
	await knex.schema.alterTable('sign_in_attempts', (t) => {
		t.index(['email_key', 'ip', 'created_at'], 'sign_in_attempts_pair_index');
		t.index(['created_at'], 'sign_in_attempts_created_index');
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('sign_in_attempts', (t) => {
		t.dropIndex([], 'sign_in_attempts_created_index');
		t.dropIndex([], 'sign_in_attempts_pair_index');
	});
	await knex('outbox_messages').whereNull('text_body').update({ text_body: '' });
	await knex.schema.alterTable('outbox_messages', (t) => {
		t.dropIndex([], 'outbox_messages_status_created_index');
		t.text('text_body').notNullable().alter();
	});
	await knex.schema.alterTable('users', (t) => {
		t.dropColumn('session_version');
	});
}
