// Invitations by e-mail: a one-time link whose secret is stored only as a hash.
import type { Response } from 'express';
import { Op } from 'sequelize';
import type { AppContext } from '../../context';
import type { Invitation, Role, User } from '../../db/models';
import { hashSecret, newSecret } from '../../http/auth';
import { afterResponse } from '../../mail/mailer';
import { invitationMessage } from '../../mail/messages';
import type { Sent } from '../../http/present';
import type { Invitation as ApiInvitation } from '../../../shared/report/api';

export function presentInvitation(inv: Invitation): Sent<ApiInvitation> {
  return {
    id: inv.id, email: inv.email, role: inv.role, isAdmin: inv.isAdmin,
    project: inv.project ? { slug: inv.project.slug, name: inv.project.name } : null,
    expiresAt: inv.expiresAt, acceptedAt: inv.acceptedAt, createdAt: inv.createdAt,
  };
}

/** Creates the invitation (replacing a pending one for the same address and project) and mails the link after the response. */
export async function invite(ctx: AppContext, res: Response, o: {
  email: string; project: { id: number; name: string; slug: string } | null; role: Role | null; isAdmin?: boolean; inviter: User;
}): Promise<Invitation> {
  const { Invitation } = ctx.db.models;
  const secret = newSecret();
  const expiresAt = new Date(Date.now() + ctx.config.invitationDays * 24 * 3600 * 1000);
  const inv = await ctx.db.sequelize.transaction(async (transaction) => {
    await Invitation.destroy({ where: { email: o.email, projectId: o.project?.id ?? { [Op.is]: null }, acceptedAt: { [Op.is]: null } }, transaction });
    return Invitation.create({
      email: o.email, projectId: o.project?.id ?? null, role: o.role, isAdmin: o.isAdmin ?? false,
      tokenHash: hashSecret(secret), invitedBy: o.inviter.id, expiresAt,
    }, { transaction });
  });
  const link = `${ctx.config.publicUrl}/invitations/${secret}`;
  const message = invitationMessage({ to: o.email, inviter: o.inviter.name, projectName: o.project?.name ?? null, role: o.role, link, expiresAt });
  afterResponse(res, ctx.mail, async () => ctx.mail.send(message));
  return inv;
}
