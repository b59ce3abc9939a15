import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { getDb } from '$lib/server/db';
import { currentOrganisation, organisationsWith } from '$lib/server/auth/guard';
import { isRole } from '$lib/server/auth/roles';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { kickOutbox } from '$lib/server/mail/outbox';
import { openInvitations } from '$lib/server/repositories/invitations';
import { membersOf } from '$lib/server/repositories/users';
import { changeRole, inviteInput, inviteMember, removeMember, withdrawInvitation } from '$lib/server/services/members';

export const load = (async (event) => {
	const { actor, organisationId } = currentOrganisation(event, 'users.manage');
	const db = getDb();
	const [members, invitations] = await Promise.all([membersOf(db, organisationId), openInvitations(db, organisationId)]);
	const current = actor.memberships.find((m) => m.organisation_id === organisationId)!;
	return {
		organisation: current.organisation_name,
		organisationSlug: current.organisation_slug,
		organisations: actor.memberships.filter((m) => organisationsWith(actor, 'users.manage').includes(m.organisation_id)).map((m) => ({ slug: m.organisation_slug, name: m.organisation_name })),
		me: actor.id,
		members,
		invitations: invitations.map((i) => ({ id: i.id, email: i.email, role: i.role, expiresAt: i.expires_at }))
	};
}) satisfies PageServerLoad;

function idField(data: FormData, name: string): number | null {
	const v = Number(data.get(name));
	return Number.isInteger(v) && v > 0 ? v : null;
}

export const actions = {
	invite: async (event) => {
		const { actor, organisationId } = currentOrganisation(event, 'users.manage');
		const values = formFields(await event.request.formData(), ['email', 'role']);
		const parsed = parseForm(inviteInput, values, ['email', 'role']);
		if (!parsed.ok) return parsed.failure;
		const orgName = actor.memberships.find((m) => m.organisation_id === organisationId)!.organisation_name;
		try {
			await inviteMember(getDb(), { organisationId, organisationName: orgName, inviter: actor, email: parsed.data.email, role: parsed.data.role });
		} catch (err) {
			return serviceFailure(err, values);
		}
		void kickOutbox().catch(() => {});
		return { invited: parsed.data.email };
	},
	role: async (event) => {
		const { actor, organisationId } = currentOrganisation(event, 'users.manage');
		const data = await event.request.formData();
		const userId = idField(data, 'userId');
		const role = data.get('role');
		if (!userId || !isRole(role)) return fail(400, { errors: { _: 'Choose a person and a role.' } });
		try {
			await changeRole(getDb(), organisationId, actor.id, userId, role);
		} catch (err) {
			return serviceFailure(err);
		}
		return { changed: true };
	},
	remove: async (event) => {
		const { actor, organisationId } = currentOrganisation(event, 'users.manage');
		const userId = idField(await event.request.formData(), 'userId');
		if (!userId) return fail(400, { errors: { _: 'Choose a person.' } });
		try {
			await removeMember(getDb(), organisationId, actor.id, userId);
		} catch (err) {
			return serviceFailure(err);
		}
		return { removed: true };
	},
	withdraw: async (event) => {
		const { actor, organisationId } = currentOrganisation(event, 'users.manage');
		const id = idField(await event.request.formData(), 'invitationId');
		if (!id) return fail(400, { errors: { _: 'Choose an invitation.' } });
		try {
			await withdrawInvitation(getDb(), organisationId, actor.id, id);
		} catch (err) {
			return serviceFailure(err);
		}
		return { withdrawn: true };
	}
} satisfies Actions;
