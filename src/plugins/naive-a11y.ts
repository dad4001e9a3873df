import type { App } from 'vue';

/**
 * Naive UI draws a few controls without the markup that screen readers and keyboard users need.
 * This fills it in for every use at once, as the library renders them:
 * - a form item's <label> has no `for`: its control is named through aria-labelledby;
 * - a select's focusable box has no role or name: it becomes a combobox named by the select's
 *   own aria-label or by its form item's label, with aria-expanded following the menu;
 * - a radio group has no group role: it becomes a radiogroup named by its form item's label;
 * - a <label for> that points at a field component names the wrapper, not its text box: the text
 *   box is named by the label instead;
 * - a password field's show/hide eye is clickable only: it becomes a button in the tab order;
 * - a number field's step buttons have no text: they are named (arrow keys step the field);
 * - a sortable table heading sorts on click only: it takes focus, and Enter or Space sorts;
 * - a card's title is marked role="heading" twice and without a level: it becomes one level-2
 *   heading, which also names the dialog it heads.
 * Names are written only where the library left none; roles, states and the step buttons' and
 * eye's names are set outright, as the library sets none of its own there. Its re-renders keep
 * them, and the observer below sets them again on the elements it makes anew.
 */
let counter = 0;
const idOf = (el: Element) => (el.id ||= `fs-a11y-${++counter}`);

const hasName = (el: Element) =>
  el.hasAttribute('aria-label') ||
  el.hasAttribute('aria-labelledby') ||
  ((el as HTMLInputElement).labels?.length ?? 0) > 0;

/** Names `el` after its form item's label, unless it is named already. */
function nameByFormItem(el: Element) {
  if (hasName(el)) return;
  const label = el.closest('.n-form-item')?.querySelector(':scope > .n-form-item-label');
  if (label) el.setAttribute('aria-labelledby', idOf(label));
}

function fixFormItem(item: Element) {
  const control = item.querySelector(
    ':scope > .n-form-item-blank :is(input:not([type=hidden], [type=radio], [type=checkbox]), textarea)',
  );
  // A select's own input is named with its box, below.
  if (control && !control.closest('.n-base-selection')) nameByFormItem(control);
  const group = item.querySelector(':scope > .n-form-item-blank .n-radio-group');
  if (group) {
    group.setAttribute('role', 'radiogroup');
    nameByFormItem(group);
  }
}

function fixSelection(selection: Element) {
  const label = selection.closest('.n-select')?.getAttribute('aria-label');
  const expanded = String(selection.classList.contains('n-base-selection--active'));
  for (const box of selection.querySelectorAll(
    ':scope > .n-base-selection-label, :scope > .n-base-selection-tags',
  )) {
    box.setAttribute('role', 'combobox');
    box.setAttribute('aria-haspopup', 'listbox');
    box.setAttribute('aria-expanded', expanded);
    if (label && !hasName(box)) box.setAttribute('aria-label', label);
    nameByFormItem(box);
  }
  const input = selection.querySelector('input.n-base-selection-input');
  if (input) {
    if (label && !hasName(input)) input.setAttribute('aria-label', label);
    nameByFormItem(input);
  }
}

function fixFieldWrapper(wrapper: Element) {
  const label = document.querySelector(`label[for="${CSS.escape(wrapper.id)}"]`);
  const field = wrapper.querySelector('input, textarea');
  if (label && field && !hasName(field)) field.setAttribute('aria-labelledby', idOf(label));
}

function fixStepButtons(field: Element) {
  const [down, up] = field.querySelectorAll('button.n-button');
  down?.setAttribute('aria-label', 'Decrease');
  up?.setAttribute('aria-label', 'Increase');
}

function fixSortableHeading(th: Element) {
  th.setAttribute('tabindex', '0');
  const sorter = th.querySelector('.n-data-table-sorter');
  const order = sorter?.classList.contains('n-data-table-sorter--asc')
    ? 'ascending'
    : sorter?.classList.contains('n-data-table-sorter--desc')
      ? 'descending'
      : 'none';
  th.setAttribute('aria-sort', order);
}

function fixPasswordEye(eye: Element) {
  const input = eye.closest('.n-input')?.querySelector('input');
  eye.setAttribute('role', 'button');
  eye.setAttribute('tabindex', '0');
  eye.setAttribute('aria-label', 'Show password');
  eye.setAttribute('aria-pressed', String(input?.type === 'text'));
}

function fixCardHeader(header: Element) {
  const title = header.querySelector(':scope > .n-card-header__main');
  if (!title) return;
  header.removeAttribute('role');
  title.setAttribute('aria-level', '2');
  const dialog = header.closest('[role=dialog]');
  if (dialog && !hasName(dialog)) dialog.setAttribute('aria-labelledby', idOf(title));
}

const fixes: [string, (el: Element) => void][] = [
  ['.n-form-item', fixFormItem],
  ['.n-base-selection', fixSelection],
  ['.n-input__eye', fixPasswordEye],
  ['.n-input[id], .n-mention[id]', fixFieldWrapper],
  ['.n-input-number', fixStepButtons],
  ['th.n-data-table-th--sortable', fixSortableHeading],
  ['.n-card-header[role=heading]', fixCardHeader],
];

function fixWithin(root: Element) {
  for (const [selector, fix] of fixes) {
    if (root.matches(selector)) fix(root);
    root.querySelectorAll(selector).forEach(fix);
  }
}

export const naiveA11y = {
  install(_app: App) {
    const observer = new MutationObserver((records) => {
      const added = new Set<Element>();
      for (const r of records) {
        const target = r.target as Element;
        if (r.type === 'attributes') {
          // A select opening or closing, a password shown or hidden.
          if (target.matches('.n-base-selection')) fixSelection(target);
          else if (target.matches('.n-data-table-sorter')) {
            const th = target.closest('th.n-data-table-th--sortable');
            if (th) fixSortableHeading(th);
          } else if (target.matches('.n-input input')) {
            const eye = target.closest('.n-input')!.querySelector('.n-input__eye');
            if (eye) fixPasswordEye(eye);
          }
          continue;
        }
        // New nodes, and the form item or select they were added to.
        const owner = target.closest?.(
          '.n-form-item, .n-base-selection, th.n-data-table-th--sortable',
        );
        if (owner) added.add(owner);
        for (const node of r.addedNodes) if (node instanceof Element) added.add(node);
      }
      added.forEach(fixWithin);
    });
    observer.observe(document.body, {
      subtree: true,
      childList: true,
      attributes: true,
      attributeFilter: ['class', 'type'],
    });
    // The eye and the headings are not buttons: Enter and Space press them like one.
    document.addEventListener('keydown', (e) => {
      const target = e.target as Element | null;
      const pressable = target?.matches?.('.n-input__eye, th.n-data-table-th--sortable');
      if (pressable && (e.key === 'Enter' || e.key === ' ')) {
        e.preventDefault();
        (target as HTMLElement).click();
      }
    });
  },
};
