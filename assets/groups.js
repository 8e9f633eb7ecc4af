/* siteharvest: keep the editor's foldable groups as the user left them when the editor is rebuilt.
   A <details> element does not report its "open" state to Dash by itself; this tells Dash on each toggle. */
document.addEventListener("toggle", function (event) {
  var el = event.target;
  if (!el || !el.classList || !el.classList.contains("sh-group")) { return; }
  var dc = window.dash_clientside;
  if (!dc || typeof dc.set_props !== "function") { return; }
  try {
    dc.set_props(JSON.parse(el.id), { open: el.open });
  } catch (err) {
    /* not a pattern-matching id: nothing to record */
  }
}, true);
