/* siteharvest: a random token for this page, made once when the page opens. The server keeps this
   page's uploads under it; it is never a password and carries nothing else. */
window.dash_clientside = Object.assign({}, window.dash_clientside, {
  siteharvest: Object.assign({}, (window.dash_clientside || {}).siteharvest, {
    newSession: function (_modified, current) {
      if (current) { return window.dash_clientside.no_update; }
      var bytes = new Uint8Array(24);
      window.crypto.getRandomValues(bytes);
      return Array.from(bytes, function (b) { return b.toString(16).padStart(2, "0"); }).join("");
    }
  })
});
