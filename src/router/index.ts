import { createRouter, createWebHistory } from 'vue-router';
import { useSessionStore } from '@/stores/session';

declare module 'vue-router' {
  interface RouteMeta {
    /** Reachable signed out. */
    public?: boolean;
    /** Only for the signed out (sign-in, register): the signed-in go to their projects. */
    guestOnly?: boolean;
    /** The page's name in the window title, before "· Fairsheet". */
    title?: string;
  }
}

export const router = createRouter({
  history: createWebHistory(),
  routes: [
    { path: '/', redirect: '/projects' },
    {
      path: '/sign-in',
      name: 'sign-in',
      component: () => import('@/views/SignInView.vue'),
      meta: { title: 'Sign in', public: true, guestOnly: true },
    },
    {
      path: '/register',
      name: 'register',
      component: () => import('@/views/RegisterView.vue'),
      meta: { title: 'Create an account', public: true, guestOnly: true },
    },
    {
      path: '/reset-password',
      name: 'reset-password',
      component: () => import('@/views/ResetPasswordView.vue'),
      meta: { title: 'Reset the password', public: true },
    },
    {
      path: '/confirm-email',
      name: 'confirm-email',
      component: () => import('@/views/ConfirmEmailView.vue'),
      meta: { title: 'Confirm your address', public: true },
    },
    {
      path: '/invitations/:token',
      name: 'invitation',
      component: () => import('@/views/InvitationView.vue'),
      props: true,
      meta: { title: 'Invitation', public: true },
    },
    {
      path: '/projects',
      name: 'projects',
      component: () => import('@/views/ProjectsView.vue'),
      meta: { title: 'Your projects' },
    },
    {
      path: '/projects/:projectId',
      component: () => import('@/views/ProjectView.vue'),
      props: true,
      children: [
        {
          path: '',
          name: 'project',
          component: () => import('@/views/ProjectOverviewView.vue'),
          props: true,
          meta: { title: 'Overview' },
        },
        {
          path: 'model',
          name: 'project-model',
          component: () => import('@/views/ProjectModelView.vue'),
          meta: { title: 'Dimensions & relations' },
        },
        {
          path: 'history',
          name: 'project-history',
          component: () => import('@/views/ProjectHistoryView.vue'),
          meta: { title: 'History' },
        },
        {
          path: 'sheets',
          name: 'project-sheets',
          component: () => import('@/views/ProjectSheetsView.vue'),
          meta: { title: 'Sheets' },
        },
        {
          path: 'parts',
          name: 'project-parts',
          component: () => import('@/views/ProjectPartsView.vue'),
          meta: { title: 'Parts & features' },
        },
        {
          path: 'parts/:partId',
          name: 'project-part',
          component: () => import('@/views/PartView.vue'),
          props: true,
          meta: { title: 'Part' },
        },
        {
          path: 'sheets/:sheetId',
          name: 'project-sheet',
          component: () => import('@/views/SheetView.vue'),
          meta: { title: 'Sheet' },
        },
        {
          path: 'team',
          name: 'project-team',
          component: () => import('@/views/ProjectTeamView.vue'),
          props: true,
          meta: { title: 'Team' },
        },
        {
          path: 'activity',
          name: 'project-activity',
          component: () => import('@/views/ProjectActivityView.vue'),
          props: true,
          meta: { title: 'Checks & activity' },
        },
      ],
    },
    {
      // Outside the project layout: the page is the sheet, ready to print.
      path: '/projects/:projectId/shop-sheet/print',
      name: 'shop-sheet-print',
      component: () => import('@/views/ShopSheetPrintView.vue'),
      props: true,
      meta: { title: 'Shop sheet' },
    },
    {
      path: '/:pathMatch(.*)*',
      name: 'not-found',
      component: () => import('@/views/NotFoundView.vue'),
      meta: { title: 'Nothing here', public: true },
    },
  ],
});

router.afterEach((to) => {
  document.title = to.meta.title ? `${to.meta.title} · Fairsheet` : 'Fairsheet';
});

router.beforeEach(async (to) => {
  const session = useSessionStore();
  // Server unreachable: carry on as signed out; the sign-in form then says what is wrong.
  await session.ensureLoaded().catch(() => undefined);
  if (to.meta.guestOnly && session.signedIn) return { name: 'projects' };
  if (!to.meta.public && !session.signedIn)
    return { name: 'sign-in', query: { next: to.fullPath } };
  return true;
});
