/** The e-mails Cairnfield sends. Plain text first; the HTML part mirrors it. */
import type { OutgoingMail } from '../repositories/outbox';
import { ROLE_LABELS, type Role } from '../auth/roles';

function escapeHtml(s: string): string {
	return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

function html(paragraphs: string[], link: { url: string; label: string }): string {
	return `<div style="font-family:sans-serif;max-width:32rem">${paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`).join('')}<p><a href="${escapeHtml(link.url)}">${escapeHtml(link.label)}</a></p></div>`;
}

export function invitationMail(to: string, orgName: string, role: Role, inviter: string, url: string): OutgoingMail {
	const lines = [
		`${inviter} has invited you to ${orgName} on Cairnfield as ${ROLE_LABELS[role].toLowerCase()}.`,
		'Open the link below to choose your name and password. The link works once and expires in 7 days.'
	];
	return { to, subject: `You are invited to ${orgName} on Cairnfield`, text: `${lines.join('\n\n')}\n\n${url}\n`, html: html(lines, { url, label: 'Accept the invitation' }) };
}

export function passwordResetMail(to: string, url: string): OutgoingMail {
	const lines = [
		'Someone asked to reset the password of your Cairnfield account. If it was you, open the link below within one hour.',
		'If it was not you, ignore this message: your password stays as it is.'
	];
	return { to, subject: 'Reset your Cairnfield password', text: `${lines.join('\n\n')}\n\n${url}\n`, html: html(lines, { url, label: 'Choose a new password' }) };
}

/** How long an e-mailed sign-in link stays valid. */
export const SIGN_IN_LINK_MINUTES = 15;

export function signInLinkMail(to: string, url: string): OutgoingMail {
	const lines = [`Open the link below to sign in to Cairnfield. It works once and expires in ${SIGN_IN_LINK_MINUTES} minutes.`, 'If you did not ask for it, ignore this message.'];
	return { to, subject: 'Your Cairnfield sign-in link', text: `${lines.join('\n\n')}\n\n${url}\n`, html: html(lines, { url, label: 'Sign in to Cairnfield' }) };
}

export interface RevisionMailContext {
	networkName: string;
	proposalTitle: string;
	revisionNumber: number;
	strategy: string;
	/** Absolute link built from the configured origin. */
	url: string;
}

const revisionLabel = (c: RevisionMailContext) => `revision ${c.revisionNumber} (${c.strategy}) of "${c.proposalTitle}"`;

export function revisionSubmittedMail(to: string, c: RevisionMailContext, submitter: string, note: string): OutgoingMail {
	const lines = [
		`${submitter} submitted ${revisionLabel(c)} in ${c.networkName} for review.`,
		...(note ? [`Why this one: ${note}`] : []),
		'Open the revision to compare it and approve or reject it. You cannot review a revision you wrote yourself.'
	];
	return { to, subject: `Review wanted: ${c.proposalTitle}, revision ${c.revisionNumber}`, text: `${lines.join('\n\n')}\n\n${c.url}\n`, html: html(lines, { url: c.url, label: 'Open the revision' }) };
}

export function revisionDecidedMail(to: string, c: RevisionMailContext, reviewer: string, decision: 'approve' | 'reject', comment: string): OutgoingMail {
	const verb = decision === 'approve' ? 'approved' : 'rejected';
	const lines = [
		`${reviewer} ${verb} ${revisionLabel(c)} in ${c.networkName}.`,
		...(comment ? [`Comment: ${comment}`] : []),
		decision === 'approve' ? 'It is now the network’s plan; the earlier plan is kept as superseded.' : 'Run again or submit another revision when you are ready.'
	];
	return { to, subject: `Revision ${c.revisionNumber} of ${c.proposalTitle} ${verb}`, text: `${lines.join('\n\n')}\n\n${c.url}\n`, html: html(lines, { url: c.url, label: 'Open the revision' }) };
}

export function fieldTasksAssignedMail(to: string, networkName: string, assigner: string, count: number, url: string): OutgoingMail {
	const lines = [
		`${assigner} assigned you ${count} field task${count === 1 ? '' : 's'} in ${networkName}.`,
		'Your route is on the field page, in the order to work it. Read the field cautions before the first task of the day.'
	];
	return { to, subject: `Field tasks in ${networkName}: ${count} assigned to you`, text: `${lines.join('\n\n')}\n\n${url}\n`, html: html(lines, { url, label: 'Open your route' }) };
}

export function fieldTasksCancelledMail(to: string, networkName: string, count: number, url: string): OutgoingMail {
	const lines = [`A newer plan for ${networkName} was approved: ${count} of your open field task${count === 1 ? ' was' : 's were'} cancelled.`, 'Your route now shows the tasks of the new plan once they are assigned to you.'];
	return { to, subject: `Field tasks in ${networkName} cancelled by a newer plan`, text: `${lines.join('\n\n')}\n\n${url}\n`, html: html(lines, { url, label: 'Open your route' }) };
}
