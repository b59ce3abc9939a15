import type { Knex } from 'knex';

/**
 * Siting proposals and their reviewed revisions, and the plan a network follows.
 *
 * - proposals: a siting question for a network, with its author.
 * - revisions: one finished placement run each, an immutable snapshot (inputs, parameters,
 *   engine version, outputs) plus its workflow state. A trigger refuses any change to the
 *   snapshot columns once the row exists; only the state and its review fields may change.
 * - reviews: the one decision on a submitted revision (unique per revision: one winner).
 * - plans: the approved revisions of a network over time; at most one is current (a unique key
 *   on a column that holds the network id only while the plan is current).
 * - outbox_messages.next_attempt_at: delivery retries with backoff.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('proposals', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.string('title', 200).notNullable();
		t.text('description').notNullable();
		t.integer('author_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		// Why the analyst chose the revision they submitted, written on the comparison page.
		t.text('choice_note').notNullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.timestamp('updated_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.index(['network_id', 'created_at']);
	});

	await knex.schema.createTable('revisions', (t) => {
		t.increments('id').primary();
		t.integer('proposal_id').unsigned().notNullable().references('proposals.id').onDelete('CASCADE');
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.integer('number').unsigned().notNullable();
		t.enu('strategy', ['lloyd', 'range-limited', 'zone-balanced']).notNullable();
		t.integer('author_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		// The job that computed it (one revision per job at most).
		t.bigInteger('job_id').unsigned().nullable().unique();
		// Snapshot, never changed (see the trigger below).
		t.string('engine_version', 40).notNullable();
		t.json('inputs').notNullable();
		t.json('parameters').notNullable();
		t.json('outputs').notNullable();
		t.json('metrics').notNullable();
		t.specificType('content_hash', 'CHAR(64)').notNullable();
		// Workflow.
		t.enu('state', ['draft', 'submitted', 'approved', 'rejected', 'superseded']).notNullable().defaultTo('draft');
		t.integer('submitted_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('submitted_at', { precision: 3 }).nullable();
		t.timestamp('decided_at', { precision: 3 }).nullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.unique(['proposal_id', 'number']);
		t.index(['network_id', 'state']);
	});
	await knex.raw(`
		CREATE TRIGGER revisions_snapshot_never_changes BEFORE UPDATE ON revisions FOR EACH ROW
		BEGIN
			IF NOT (NEW.proposal_id <=> OLD.proposal_id AND NEW.network_id <=> OLD.network_id AND NEW.number <=> OLD.number
				AND NEW.strategy <=> OLD.strategy AND NEW.author_id <=> OLD.author_id AND NEW.job_id <=> OLD.job_id
				AND NEW.engine_version <=> OLD.engine_version AND NEW.inputs <=> OLD.inputs AND NEW.parameters <=> OLD.parameters
				AND NEW.outputs <=> OLD.outputs AND NEW.metrics <=> OLD.metrics AND NEW.content_hash <=> OLD.content_hash
				AND NEW.created_at <=> OLD.created_at) THEN
				SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'A revision is a snapshot and never changes; run again to make a new one.';
			END IF;
		END`);

	await knex.schema.createTable('reviews', (t) => {
		t.increments('id').primary();
		// Unique: a revision gets one decision, whoever comes first.
		t.integer('revision_id').unsigned().notNullable().unique().references('revisions.id').onDelete('CASCADE');
		t.integer('reviewer_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.enu('decision', ['approve', 'reject']).notNullable();
		t.text('comment').notNullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
	});

	await knex.schema.createTable('plans', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.integer('revision_id').unsigned().notNullable().unique().references('revisions.id').onDelete('CASCADE');
		t.enu('state', ['current', 'superseded']).notNullable().defaultTo('current');
		t.integer('approved_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('approved_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.timestamp('superseded_at', { precision: 3 }).nullable();
		t.integer('superseded_by').unsigned().nullable().references('plans.id').onDelete('SET NULL');
		t.index(['network_id', 'approved_at']);
	});
	// At most one current plan per network.
	await knex.raw("ALTER TABLE plans ADD COLUMN current_network_id INT UNSIGNED AS (IF(state = 'current', network_id, NULL)) PERSISTENT, ADD UNIQUE KEY plans_one_current (current_network_id)");

	await knex.schema.alterTable('outbox_messages', (t) => {
		t.timestamp('next_attempt_at', { precision: 3 }).nullable();
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('outbox_messages', (t) => {
		t.dropColumn('next_attempt_at');
	});
	await knex.schema.dropTable('plans');
	await knex.schema.dropTable('reviews');
	await knex.raw('DROP TRIGGER IF EXISTS revisions_snapshot_never_changes');
	await knex.schema.dropTable('revisions');
	await knex.schema.dropTable('proposals');
}
