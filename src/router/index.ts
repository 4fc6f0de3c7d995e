/**
 * The route table. `meta.access` is the guard: `signed-in` pages send a signed-out visitor to sign-in (and back
 * afterwards), `guest` pages send a signed-in person on to their labs, `public` pages are for everyone.
 * The server checks every request anyway; the guards only keep people from landing on pages that cannot work.
 */
import { createRouter, createWebHistory, type RouteLocationRaw } from 'vue-router'
import { useSessionStore } from '@/stores/session'
import { safeNext } from '@/lib/navigation'
import { getSnapshot } from '@/api/snapshots'
import { prefetchSheet } from '@/api/sheets'
import { dismissPagePreview, pagePreviewSheet } from '@/lib/pagePreview'
import { snapshotPath } from '@/lib/reviewModel'

export { safeNext }

declare module 'vue-router' {
  interface RouteMeta {
    access?: 'signed-in' | 'guest' | 'public'
    /** Shown in the browser tab; views with a name of their own (a lab, a sheet) set the title themselves. */
    title?: string
    /** Pages without the header frame (the centred sign-in card). */
    bare?: boolean
  }
}

export const router = createRouter({
  history: createWebHistory(),
  scrollBehavior: (_to, _from, saved) => saved ?? { top: 0 },
  routes: [
    { path: '/', redirect: '/labs' },
    { path: '/sign-in', name: 'sign-in', component: () => import('@/views/SignInView.vue'), meta: { access: 'guest', title: 'Sign in', bare: true } },
    { path: '/sign-up', name: 'sign-up', component: () => import('@/views/SignUpView.vue'), meta: { access: 'guest', title: 'Create an account', bare: true } },
    { path: '/confirm/:token', name: 'confirm', component: () => import('@/views/ConfirmView.vue'), meta: { access: 'public', title: 'Confirm your account', bare: true } },
    { path: '/reset', name: 'reset-request', component: () => import('@/views/ResetRequestView.vue'), meta: { access: 'public', title: 'Reset your password', bare: true } },
    { path: '/reset/:token', name: 'reset', component: () => import('@/views/ResetPasswordView.vue'), meta: { access: 'public', title: 'Choose a new password', bare: true } },
    { path: '/invitations/:token', name: 'invitation', component: () => import('@/views/InvitationView.vue'), meta: { access: 'public', title: 'Invitation', bare: true } },
    { path: '/labs', name: 'labs', component: () => import('@/views/LabsView.vue'), meta: { access: 'signed-in', title: 'My labs' } },
    { path: '/labs/:labId', name: 'lab', component: () => import('@/views/LabView.vue'), meta: { access: 'signed-in', title: 'Lab' } },
    { path: '/labs/:labId/reviews', name: 'reviews', component: () => import('@/views/ReviewQueueView.vue'), meta: { access: 'signed-in', title: 'Reviews' } },
    { path: '/sheets/:sheetId/snapshots', name: 'snapshots', component: () => import('@/views/SnapshotsView.vue'), meta: { access: 'signed-in', title: 'Snapshots' } },
    { path: '/sheets/:sheetId/snapshots/:snapshotId', name: 'snapshot', component: () => import('@/views/SnapshotView.vue'), meta: { access: 'signed-in', title: 'Snapshot' } },
    { path: '/sheets/:sheetId/snapshots/:snapshotId/compare/:other', name: 'compare', component: () => import('@/views/CompareView.vue'), meta: { access: 'signed-in', title: 'Compare' } },
    { path: '/sheets/:sheetId/snapshots/:snapshotId/report', name: 'report', component: () => import('@/views/ReportView.vue'), meta: { access: 'signed-in', title: 'Review report', bare: true } },
    // mailed review requests and decisions link to a snapshot by id alone: find its sheet and go to its page
    {
      path: '/snapshots/:snapshotId',
      name: 'snapshot-link',
      component: () => import('@/views/NotFoundView.vue'),
      meta: { access: 'signed-in', title: 'Snapshot' },
      beforeEnter: async (to) => {
        try {
          const snapshot = await getSnapshot(String(to.params.snapshotId))
          return snapshotPath(snapshot.sheetId, snapshot.id)
        } catch {
          return true
        }
      },
    },
    { path: '/guest/:token', name: 'guest-link', component: () => import('@/views/GuestView.vue'), meta: { access: 'public', title: 'Snapshot', bare: true } },
    { path: '/sheets/:sheetId', name: 'sheet', component: () => import('@/views/SheetView.vue'), meta: { access: 'signed-in', title: 'Sheet' } },
    { path: '/profile', name: 'profile', component: () => import('@/views/ProfileView.vue'), meta: { access: 'signed-in', title: 'Profile' } },
    { path: '/help', name: 'help', component: () => import('@/views/HelpView.vue'), meta: { access: 'public', title: 'Help' } },
    { path: '/:pathMatch(.*)*', name: 'not-found', component: () => import('@/views/NotFoundView.vue'), meta: { access: 'public', title: 'Page not found' } },
  ],
})

router.beforeEach(async (to): Promise<RouteLocationRaw | true> => {
  const session = useSessionStore()
  // the page's code loads while the session is checked, not after (the router fetches lazy views only once the
  // guards have answered; the module cache makes its own import reuse this one)
  for (const record of to.matched) {
    const view = record.components?.default
    // a lazy view is a bare loader function; a component written as a function carries props or a name (vue-router's own test)
    if (typeof view === 'function' && !('props' in view) && !('displayName' in view) && !('__vccOpts' in view))
      void (view as () => Promise<unknown>)().catch(() => undefined)
  }
  // a sheet's metadata is read while the session is checked, not after (the page's request joins this one)
  if (to.name === 'sheet' && (session.signedIn || !session.loaded)) prefetchSheet(String(to.params.sheetId))
  await session.ensureLoaded()
  const access = to.meta.access ?? 'signed-in'
  if (access === 'signed-in' && !session.signedIn)
    return { name: 'sign-in', query: to.fullPath === '/labs' ? {} : { next: to.fullPath } }
  if (access === 'guest' && session.signedIn) return safeNext(to.query.next) ?? { name: 'labs' }
  return true
})

router.afterEach((to) => {
  // the server's first view of a sheet belongs to that sheet's page only
  const previewed = pagePreviewSheet()
  if (previewed !== null && (to.name !== 'sheet' || String(to.params.sheetId) !== previewed)) dismissPagePreview()
  document.title = to.meta.title ? `${to.meta.title} · Penumbra` : 'Penumbra'
})

/** Sets the browser tab's title from a view (a lab's or a sheet's name). */
export function setPageTitle(title: string): void {
  document.title = title ? `${title} · Penumbra` : 'Penumbra'
}
