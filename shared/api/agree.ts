/**
 * Type-level checks that a schema's `z.infer` and a type written elsewhere (the engine states its
 * result and diff as interfaces) say the same, field for field and optional for optional:
 * `type _Agree = [Assert<Same<z.infer<typeof schema>, EngineType>>]` fails the type check
 * when one of them changes without the other.
 */
export type Same<A, B> =
  (<T>() => T extends A ? 1 : 2) extends <T>() => T extends B ? 1 : 2 ? true : false;
export type Assert<T extends true> = T;
