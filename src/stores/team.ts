import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import {
  checkerRoles,
  reviewerRoles,
  type ActivityEntry,
  type Check,
  type Comment,
  type CommentBody,
  type Correction,
  type CorrectionBody,
  type Invitation,
  type InvitationBody,
  type ProjectRole,
} from '@shared/api';
import { projectsApi } from '@/api/projects';
import { teamApi, type CheckSummary } from '@/api/team';
import { useProjectsStore } from './projects';
import { useSessionStore } from './session';

type ActivityKind = ActivityEntry['kind'];

/** Where a comment hangs: a dimension name, a relation id, `sheetId:pinId`, or a sheet id. */
export interface CommentTarget {
  targetKind: Comment['targetKind'];
  targetId: string;
}

export const targetKey = (t: CommentTarget) => `${t.targetKind}:${t.targetId}`;

/**
 * The review side of a project: who is invited, which derived values a second person has
 * checked (and which need re-checking), comments, corrections to the drawings and the log.
 * Everything is per project; `projectId` says which one the lists belong to.
 */
export const useTeamStore = defineStore('team', () => {
  const projectId = ref('');
  const invitations = ref<Invitation[]>([]);
  const checks = ref<Check[]>([]);
  const summary = ref<CheckSummary>({ derived: 0, checked: 0, void: 0 });
  const checksLoaded = ref(false);
  /** Comments by target (`dimension:horn2_x`), loaded thread by thread. */
  const comments = ref<Record<string, Comment[]>>({});
  const corrections = ref<Correction[]>([]);
  const activity = ref<ActivityEntry[]>([]);

  /** Lists of another project are dropped before loading this one's. */
  function use(id: string) {
    if (projectId.value === id) return;
    projectId.value = id;
    invitations.value = [];
    checks.value = [];
    summary.value = { derived: 0, checked: 0, void: 0 };
    checksLoaded.value = false;
    comments.value = {};
    corrections.value = [];
    activity.value = [];
  }

  const checkByDimension = computed(
    () => new Map(checks.value.map((c) => [c.dimension, c] as const)),
  );
  const needRecheck = computed(() => checks.value.filter((c) => c.state === 'void'));
  const currentChecks = computed(() => checks.value.filter((c) => c.state === 'current'));

  /** What my role on the open project lets me do here; the server decides again. */
  const can = computed(() => {
    const role = useProjectsStore().current?.role;
    return {
      check: role !== undefined && checkerRoles.includes(role),
      comment: role !== undefined && reviewerRoles.includes(role),
      correct: role !== undefined && reviewerRoles.includes(role),
      manageTeam: role === 'owner',
    };
  });

  // Invitations and members.
  async function loadInvitations(id: string) {
    use(id);
    invitations.value = await teamApi.invitations(id);
  }

  async function invite(id: string, body: InvitationBody): Promise<Invitation> {
    use(id);
    const made = await teamApi.invite(id, body);
    invitations.value = [made, ...invitations.value.filter((i) => i.id !== made.id)];
    return made;
  }

  async function resendInvitation(id: string, invitationId: string) {
    const sent = await teamApi.resendInvitation(id, invitationId);
    invitations.value = invitations.value.map((i) => (i.id === invitationId ? sent : i));
  }

  async function revokeInvitation(id: string, invitationId: string) {
    await teamApi.revokeInvitation(id, invitationId);
    invitations.value = invitations.value.filter((i) => i.id !== invitationId);
  }

  /** After a change of membership the project's own view (members, my role) is fetched again. */
  async function refreshMembership(id: string) {
    const projects = useProjectsStore();
    const [project, members] = await Promise.all([projectsApi.get(id), projectsApi.members(id)]);
    projects.current = project;
    projects.members = members;
  }

  async function changeRole(id: string, userId: string, role: ProjectRole) {
    await teamApi.changeRole(id, userId, role);
    await refreshMembership(id);
  }

  /** Removes a member; removing oneself is leaving, after which the project is out of reach. */
  async function removeMember(id: string, userId: string) {
    await teamApi.removeMember(id, userId);
    if (userId === useSessionStore().user?.id) return;
    await refreshMembership(id);
  }

  // Checks.
  async function loadChecks(id: string) {
    use(id);
    const answer = await teamApi.checks(id);
    checks.value = answer.checks;
    summary.value = answer.summary;
    checksLoaded.value = true;
  }

  async function check(id: string, dimension: string) {
    await teamApi.check(id, dimension);
    await loadChecks(id);
  }

  async function uncheck(id: string, dimension: string) {
    await teamApi.uncheck(id, dimension);
    await loadChecks(id);
  }

  // Comments.
  async function loadComments(id: string, target: CommentTarget) {
    use(id);
    const list = await teamApi.comments(id, target);
    comments.value = { ...comments.value, [targetKey(target)]: list };
  }

  async function addComment(id: string, body: CommentBody): Promise<Comment> {
    use(id);
    const made = await teamApi.comment(id, body);
    const key = targetKey(made);
    comments.value = { ...comments.value, [key]: [...(comments.value[key] ?? []), made] };
    return made;
  }

  // Corrections.
  async function loadCorrections(id: string) {
    use(id);
    corrections.value = await teamApi.corrections(id);
  }

  async function addCorrection(id: string, body: CorrectionBody): Promise<Correction> {
    use(id);
    const made = await teamApi.correct(id, body);
    corrections.value = [made, ...corrections.value];
    return made;
  }

  // Activity.
  async function loadActivity(id: string, kind?: ActivityKind) {
    use(id);
    activity.value = await teamApi.activity(id, kind);
  }

  return {
    projectId,
    invitations,
    checks,
    summary,
    checksLoaded,
    comments,
    corrections,
    activity,
    checkByDimension,
    needRecheck,
    currentChecks,
    can,
    loadInvitations,
    invite,
    resendInvitation,
    revokeInvitation,
    changeRole,
    removeMember,
    loadChecks,
    check,
    uncheck,
    loadComments,
    addComment,
    loadCorrections,
    addCorrection,
    loadActivity,
  };
});
