/** The problems found on the way, kept by owner in the order they were noted. */
import type { FeatureIssue, FeatureResult } from './types';

/**
 * Issues by owner: a feature id, `part:` and a part id, or `dup:` and a repeated feature id.
 * Every step of the pipeline notes into the same log, so a feature's errors keep the order
 * in which the steps found them.
 */
export class IssueLog {
  private readonly byKey = new Map<string, FeatureIssue[]>();

  note(key: string, issue: FeatureIssue): void {
    const list = this.byKey.get(key) ?? [];
    list.push(issue);
    this.byKey.set(key, list);
  }

  of(key: string): FeatureIssue[] | undefined {
    return this.byKey.get(key);
  }

  /**
   * Every error and warning in model order: those of parts and of repeated feature ids first,
   * then each feature's own errors and warnings.
   */
  all(features: readonly FeatureResult[]): FeatureIssue[] {
    return [
      ...[...this.byKey.entries()]
        .filter(([k]) => k.startsWith('part:') || k.startsWith('dup:'))
        .flatMap(([, v]) => v),
      ...features.flatMap((f) => [...f.errors, ...f.warnings]),
    ];
  }
}
