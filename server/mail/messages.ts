/** The wording of every mail Penumbra sends, each with a plain-text and an HTML part. */
import type { LabRole } from '../../shared/schema/api'

export interface MailContent {
  subject: string
  text: string
  html: string
}

export const ROLE_DESCRIPTIONS: Record<LabRole, string> = {
  owner: 'run the lab: members, roles, every sheet',
  editor: 'create and edit sheets, upload spectra, freeze snapshots',
  reviewer: 'read every sheet of the lab live, comment and decide reviews',
  viewer: 'read the lab’s sheets and snapshots',
}

export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] as string)
}

function when(ms: number): string {
  return new Date(ms).toUTCString().replace(/:\d\d GMT$/, ' UTC')
}

/** A calm paper page with the spectrum strip on top and one accent button. */
function layout(opts: { heading: string; paragraphs: string[]; action?: { label: string; href: string }; footer: string }): string {
  const p = opts.paragraphs.map((x) => `<p style="margin:0 0 14px;line-height:1.5">${x}</p>`).join('')
  const button = opts.action
    ? `<p style="margin:22px 0"><a href="${escapeHtml(opts.action.href)}" style="background:#a9521a;color:#fffaf2;text-decoration:none;padding:10px 18px;border-radius:6px;font-weight:600;display:inline-block">${escapeHtml(opts.action.label)}</a></p>` +
      `<p style="margin:0 0 14px;font-size:13px;color:#5b6474">Or paste this address into your browser:<br><span style="font-family:'Fira Mono',Menlo,Consolas,monospace;word-break:break-all">${escapeHtml(opts.action.href)}</span></p>`
    : ''
  return `<!doctype html><html><body style="margin:0;background:#f6f3ec;font-family:'Fira Sans','Segoe UI',Helvetica,Arial,sans-serif;color:#1c2331">
<div style="max-width:560px;margin:0 auto;padding:24px 16px">
<div style="height:4px;border-radius:2px;background:linear-gradient(90deg,#7a00c8,#2e3cff,#00b4ff,#00d060,#e8e800,#ff9a00,#ff2200,#a00000)"></div>
<div style="background:#15223f;color:#f6f3ec;padding:12px 18px;font-weight:600;letter-spacing:.04em">Penumbra</div>
<div style="background:#fffdf9;border:1px solid #e2ddd2;border-top:0;padding:22px 20px">
<h1 style="font-size:19px;margin:0 0 16px;font-weight:600">${escapeHtml(opts.heading)}</h1>${p}${button}
<p style="margin:18px 0 0;font-size:13px;color:#5b6474">${opts.footer}</p>
</div></div></body></html>`
}

export function invitationMail(o: { labName: string; role: LabRole; inviterName: string; link: string; expiresAt: number }): MailContent {
  const subject = `${o.inviterName} invites you to ${o.labName} on Penumbra`
  const text = [
    `${o.inviterName} invites you to join the lab "${o.labName}" on Penumbra as ${o.role}.`,
    `As ${o.role} you may ${ROLE_DESCRIPTIONS[o.role]}.`,
    '',
    'Open this link to accept. It works whether or not you already have a Penumbra account:',
    o.link,
    '',
    `The link works once and expires on ${when(o.expiresAt)}.`,
    'If you did not expect this invitation, you can ignore this mail.',
  ].join('\n')
  const html = layout({
    heading: `Join ${o.labName}`,
    paragraphs: [
      `${escapeHtml(o.inviterName)} invites you to join the lab <strong>${escapeHtml(o.labName)}</strong> on Penumbra as <strong>${o.role}</strong>.`,
      `As ${o.role} you may ${escapeHtml(ROLE_DESCRIPTIONS[o.role])}.`,
      'The link works whether or not you already have a Penumbra account.',
    ],
    action: { label: 'Accept the invitation', href: o.link },
    footer: `The link works once and expires on ${escapeHtml(when(o.expiresAt))}. If you did not expect this invitation, you can ignore this mail.`,
  })
  return { subject, text, html }
}

export function passwordResetMail(o: { name: string; link: string; expiresAt: number }): MailContent {
  const subject = 'Choose a new Penumbra password'
  const text = [
    `Hello ${o.name},`,
    '',
    'Someone (we hope you) asked to choose a new password for your Penumbra account. Open this link to do so:',
    o.link,
    '',
    `The link works once and expires on ${when(o.expiresAt)}. Choosing a new password signs you out everywhere else.`,
    'If you did not ask for this, ignore this mail: your password stays as it is.',
  ].join('\n')
  const html = layout({
    heading: 'Choose a new password',
    paragraphs: [
      `Hello ${escapeHtml(o.name)},`,
      'Someone (we hope you) asked to choose a new password for your Penumbra account.',
    ],
    action: { label: 'Choose a new password', href: o.link },
    footer: `The link works once and expires on ${escapeHtml(when(o.expiresAt))}. Choosing a new password signs you out everywhere else. If you did not ask for this, ignore this mail: your password stays as it is.`,
  })
  return { subject, text, html }
}

export function confirmSignUpMail(o: { name: string; link: string; expiresAt: number }): MailContent {
  const subject = 'Confirm your Penumbra account'
  const text = [
    `Hello ${o.name},`,
    '',
    'Open this link to confirm your e-mail address and finish creating your Penumbra account:',
    o.link,
    '',
    'You will be asked for the password you chose when you signed up.',
    '',
    `The link works once and expires on ${when(o.expiresAt)}.`,
    'If you did not sign up, ignore this mail and no account is created.',
  ].join('\n')
  const html = layout({
    heading: 'Confirm your account',
    paragraphs: [
      `Hello ${escapeHtml(o.name)},`,
      'Confirm your e-mail address to finish creating your Penumbra account. You will be asked for the password you chose when you signed up.',
    ],
    action: { label: 'Confirm and sign in', href: o.link },
    footer: `The link works once and expires on ${escapeHtml(when(o.expiresAt))}. If you did not sign up, ignore this mail and no account is created.`,
  })
  return { subject, text, html }
}

export function alreadySignedUpMail(o: { name: string; signInLink: string; resetLink: string }): MailContent {
  const subject = 'You already have a Penumbra account'
  const text = [
    `Hello ${o.name},`,
    '',
    'Someone (we hope you) tried to sign up for Penumbra with this address, which already has an account.',
    `Sign in here: ${o.signInLink}`,
    `Forgot your password? Ask for a new one here: ${o.resetLink}`,
    '',
    'If it was not you, ignore this mail: nothing has changed.',
  ].join('\n')
  const html = layout({
    heading: 'You already have an account',
    paragraphs: [
      `Hello ${escapeHtml(o.name)},`,
      'Someone (we hope you) tried to sign up for Penumbra with this address, which already has an account.',
      `Forgot your password? <a href="${escapeHtml(o.resetLink)}" style="color:#a9521a">Ask for a new one</a>.`,
    ],
    action: { label: 'Sign in', href: o.signInLink },
    footer: 'If it was not you, ignore this mail: nothing has changed.',
  })
  return { subject, text, html }
}

/** The quoted text of a note or comment in a mail: at most 600 characters. */
function quoted(text: string): string {
  return text.length > 600 ? `${text.slice(0, 599)}…` : text
}

export function reviewRequestMail(o: { reviewerName: string; requesterName: string; sheetTitle: string; shortHash: string; message: string; note: string; link: string }): MailContent {
  const subject = `${o.requesterName} asks you to review "${o.sheetTitle}" (${o.shortHash})`
  const text = [
    `Hello ${o.reviewerName},`,
    '',
    `${o.requesterName} asks you to review the snapshot ${o.shortHash} of the sheet "${o.sheetTitle}": ${o.message}`,
    ...(o.note ? ['', `Their note: ${quoted(o.note)}`] : []),
    '',
    'Open the snapshot to compare it, comment on its cells and approve it or ask for changes:',
    o.link,
  ].join('\n')
  const html = layout({
    heading: 'A snapshot to review',
    paragraphs: [
      `Hello ${escapeHtml(o.reviewerName)},`,
      `${escapeHtml(o.requesterName)} asks you to review the snapshot <strong>${escapeHtml(o.shortHash)}</strong> of the sheet <strong>${escapeHtml(o.sheetTitle)}</strong>: ${escapeHtml(o.message)}`,
      ...(o.note ? [`Their note: <em>${escapeHtml(quoted(o.note))}</em>`] : []),
    ],
    action: { label: 'Open the snapshot', href: o.link },
    footer: 'You get this mail because you are a reviewer or owner of the lab.',
  })
  return { subject, text, html }
}

const DECISION_WORDS = { approved: 'approved', 'changes-requested': 'asked for changes to' } as const

export function reviewDecisionMail(o: { requesterName: string; reviewerName: string; decision: 'approved' | 'changes-requested'; sheetTitle: string; shortHash: string; note: string; link: string }): MailContent {
  const subject = `${o.reviewerName} ${DECISION_WORDS[o.decision]} "${o.sheetTitle}" (${o.shortHash})`
  const text = [
    `Hello ${o.requesterName},`,
    '',
    `${o.reviewerName} ${DECISION_WORDS[o.decision]} the snapshot ${o.shortHash} of the sheet "${o.sheetTitle}".`,
    ...(o.note ? ['', `Their note: ${quoted(o.note)}`] : []),
    '',
    o.link,
  ].join('\n')
  const html = layout({
    heading: o.decision === 'approved' ? 'Snapshot approved' : 'Changes requested',
    paragraphs: [
      `Hello ${escapeHtml(o.requesterName)},`,
      `${escapeHtml(o.reviewerName)} ${DECISION_WORDS[o.decision]} the snapshot <strong>${escapeHtml(o.shortHash)}</strong> of the sheet <strong>${escapeHtml(o.sheetTitle)}</strong>.`,
      ...(o.note ? [`Their note: <em>${escapeHtml(quoted(o.note))}</em>`] : []),
    ],
    action: { label: 'Open the snapshot', href: o.link },
    footer: 'You get this mail because you asked for this review.',
  })
  return { subject, text, html }
}

export function mentionMail(o: { name: string; authorName: string; sheetTitle: string; cellLabel: string; text: string; link: string }): MailContent {
  const subject = `${o.authorName} mentioned you on "${o.sheetTitle}"`
  const text = [`Hello ${o.name},`, '', `${o.authorName} mentioned you in a comment on ${o.cellLabel} of the sheet "${o.sheetTitle}":`, '', quoted(o.text), '', o.link].join('\n')
  const html = layout({
    heading: 'You were mentioned',
    paragraphs: [
      `Hello ${escapeHtml(o.name)},`,
      `${escapeHtml(o.authorName)} mentioned you in a comment on <strong>${escapeHtml(o.cellLabel)}</strong> of the sheet <strong>${escapeHtml(o.sheetTitle)}</strong>:`,
      `<em>${escapeHtml(quoted(o.text))}</em>`,
    ],
    action: { label: 'Open the sheet', href: o.link },
    footer: 'You get this mail because a member of your lab mentioned you.',
  })
  return { subject, text, html }
}
