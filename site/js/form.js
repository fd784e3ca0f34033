// form.js: reading a view's inputs and showing field errors beside them.

// readForm returns {name: text} for every named input of form. Texts go to
// the calculation API as typed: it accepts a decimal point or comma and
// names the field when a text is not a number.
export function readForm(form) {
  const values = {};
  for (const input of form.querySelectorAll('input[name]')) {
    values[input.name] = input.value.trim();
  }
  return values;
}

// fillForm sets the inputs named in values.
export function fillForm(form, values) {
  for (const [name, value] of Object.entries(values)) {
    const input = form.querySelector(`input[name="${name}"]`);
    if (input) input.value = String(value);
  }
}

// showing holds the forms where showError has put an error (it alone marks
// fields and fills the error slots).
const showing = new WeakSet();

// showError puts error ({field, message} from the API, or null to clear)
// next to its field, or at the form's foot when no field of the form has
// that name. A field fed by several inputs (a [minimum, maximum] pair) has
// its own [data-error-for] slot, and its inputs carry data-field="FIELD".
export function showError(form, error) {
  // Only slots and inputs that show an error are touched: an input with no
  // error to clear then changes nothing on the page but its results. A form
  // that shows none is not searched (a view clears its errors at every
  // keystroke).
  if (!error && !showing.has(form)) return;
  for (const slot of form.querySelectorAll('[data-error-for]')) if (slot.firstChild) slot.textContent = '';
  for (const input of form.querySelectorAll('input[aria-invalid]')) input.removeAttribute('aria-invalid');
  showing.delete(form);
  if (!error) return;
  showing.add(form);
  const input = error.field ? form.querySelector(`input[name="${error.field}"]`) : null;
  const slot = error.field ? form.querySelector(`[data-error-for="${error.field}"]`) : null;
  const marked = error.field ? [input, ...form.querySelectorAll(`input[data-field="${error.field}"]`)] : [];
  for (const el of marked) {
    if (!el) continue;
    el.setAttribute('aria-invalid', 'true');
    const details = el.closest('details');
    if (details) details.open = true;
  }
  if (slot) {
    const details = slot.closest('details');
    if (details) details.open = true;
    slot.textContent = error.message;
    return;
  }
  const label = error.field ? `${error.field}: ` : '';
  form.querySelector('[data-error-for=""]').textContent = label + error.message;
}
