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

// setText, setHidden and setData write only a change: writing the value an
// element already has still makes the browser style and lay it out again,
// and the views write their results on every keystroke.
export function setText(node, text) {
  const child = node.firstChild;
  const single = child !== null && child.nodeType === Node.TEXT_NODE && child.nextSibling === null;
  if (single ? child.data === text : node.textContent === text) return;
  // A new text in place of another changes the text node's data: a new
  // node (textContent) is laid out from nothing, and may restyle its
  // parent (:empty). An empty text removes the node.
  if (single && text !== '') child.data = text;
  else node.textContent = text;
}

export function setHidden(node, hidden) {
  if (node.hidden !== hidden) node.hidden = hidden;
}

export function setData(node, key, value) {
  if (node.dataset[key] !== value) node.dataset[key] = value;
}
