import { defineStore } from 'pinia';
import { computed, toRaw } from 'vue';
import { evaluateFeatures } from '@shared/engine';
import {
  dropFeature,
  dropPart,
  featureDraft,
  featureFromDraft,
  featureProblems,
  firstProblem,
  partFromDraft,
  partProblems,
  putFeature,
  putPart,
  type Feature,
  type FeatureDraft,
  type Part,
  type PartDraft,
} from '@/lib/part-rules';
import { liveSolveTimeLimitMs, useModelStore } from './model';

/**
 * The parts and features of the working model and their editing rules (src/lib/part-rules.ts).
 * The model store holds the document: every change here is one of its edits (one undo step,
 * then a live re-solve), and the features are evaluated once per solve for every view.
 */
export const usePartsStore = defineStore('parts', () => {
  const model = useModelStore();

  const parts = computed<Part[]>(() => model.model.parts ?? []);
  const features = computed<Feature[]>(() => model.model.features ?? []);
  const names = computed(() => new Set(model.dimensionNames));
  /** The stacks the parts already name, for the part form's choices. */
  const stacks = computed(
    () => [...new Set(parts.value.map((p) => p.stack).filter(Boolean))] as string[],
  );

  /**
   * The features at the model store's latest solve: positions, sizes, drills and issues. One
   * evaluation a solve, read by the parts list and the part drawing alike.
   */
  const evaluated = computed(() => {
    void model.result;
    return evaluateFeatures(toRaw(model.model), { timeLimitMs: liveSolveTimeLimitMs });
  });

  const featuresOf = (partId: string) => features.value.filter((f) => f.part === partId);
  const featureById = (id: string) => features.value.find((f) => f.id === id) ?? null;

  /** What is wrong with each field of a part's form; `previousId` names the part being edited. */
  const partFormProblems = (d: PartDraft, previousId?: string) =>
    partProblems(d, {
      names: names.value,
      takenIds: parts.value.map((p) => p.id),
      ownId: previousId,
    });

  /** What is wrong with each field of a feature's form; `previousId` names the one being edited. */
  const featureFormProblems = (d: FeatureDraft, previousId?: string) =>
    featureProblems(d, {
      names: names.value,
      takenIds: features.value.map((f) => f.id),
      ownId: previousId,
    });

  /** The form of a feature to edit, or of a new one with the next free id. */
  const featureForm = (f: Feature | null) =>
    featureDraft(
      f,
      features.value.map((x) => x.id),
    );

  /**
   * Adds a part, or replaces the one with `previousId`. Answers the first problem and changes
   * nothing when the form breaks a rule; answers '' when the part is in the model.
   */
  function savePart(d: PartDraft, previousId?: string): string {
    const problem = firstProblem(partFormProblems(d, previousId));
    if (problem) return problem;
    const part = partFromDraft(d);
    model.edit((m) => putPart(m, part, previousId));
    return '';
  }

  /** Removes a part and every feature on it, as one edit. */
  function removePart(id: string) {
    model.edit((m) => dropPart(m, id));
  }

  /**
   * Adds a feature to a part, or replaces the one with `previousId`. Answers the first problem
   * and changes nothing when the form breaks a rule; answers '' when the feature is in the model.
   */
  function saveFeature(d: FeatureDraft, partId: string, previousId?: string): string {
    if (!parts.value.some((p) => p.id === partId)) return `No part ${partId}`;
    const problem = firstProblem(featureFormProblems(d, previousId));
    if (problem) return problem;
    const feature = featureFromDraft(d, partId);
    model.edit((m) => putFeature(m, feature, previousId));
    return '';
  }

  function removeFeature(id: string) {
    model.edit((m) => dropFeature(m, id));
  }

  return {
    parts,
    features,
    stacks,
    evaluated,
    featuresOf,
    featureById,
    partFormProblems,
    featureFormProblems,
    featureForm,
    savePart,
    removePart,
    saveFeature,
    removeFeature,
  };
});
