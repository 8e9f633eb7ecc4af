/* siteharvest: a request the server refuses before any callback runs (too large, or a server error on the
   way) would otherwise leave the page silent. Say so in the line at the foot of the window. */
(function () {
  var sent = window.fetch;
  if (!sent) { return; }
  function say(text) {
    var dc = window.dash_clientside;
    if (dc && typeof dc.set_props === "function") { dc.set_props("sh-problem", {children: text}); }
  }
  window.fetch = function () {
    return sent.apply(this, arguments).then(function (reply) {
      if (reply && String(reply.url || "").indexOf("_dash-update-component") !== -1) {
        if (reply.status === 413) {
          say("That was too much to send at once: the server takes files of up to 20 MB, one request at a time. " +
              "Nothing you entered was changed.");
        } else if (reply.status >= 500) {
          say("The server could not answer (HTTP " + reply.status + "); nothing you entered was changed. " +
              "Try again, or reload the page.");
        }
      }
      return reply;
    });
  };
})();
