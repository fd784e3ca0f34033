// dom.js: building page elements. Text always goes in as textContent, so
// whatever a user typed stays text.

// el makes an element with an optional class and text.
export function el(tag, className, text) {
  const node = document.createElement(tag);
  if (className) node.className = className;
  if (text !== undefined) node.textContent = text;
  return node;
}

// button makes a type="button" button that calls onClick.
export function button(text, className, onClick) {
  const b = el('button', className, text);
  b.type = 'button';
  b.addEventListener('click', onClick);
  return b;
}
