/* siteharvest: the page's requests to the server.
   - A request the server refuses before any callback runs (too large, or a server error on the way) would
     otherwise leave the page silent: say so in the line at the foot of the window.
   - While the results are being recomputed they are marked as updating (dimmed, "Updating the results…",
     aria-busy), from the edit that asks for them to the last answer: stale results never look current. */
(function () {
  var sent = window.fetch;
  if (!sent) { return; }
  var QUIET_MS = 120;     /* after the last answer: the next callback of a chain follows within this */
  var NO_REQUEST_MS = 800; /* an edit that asks nothing (the same value again) stops looking busy */
  var pending = 0;
  var timer = null;
  var awaiting = false;    /* the spots changed: the results answering them are still to come */
  var AWAIT_MS = 15000;    /* never busy for ever if that answer does not come */
  /* answers that change nothing the results show */
  var NOT_RESULTS = ["sh-report-download", "sh-portfolio-download", "sh-site-download", "sh-problem.children"];

  function say(text) {
    var dc = window.dash_clientside;
    if (dc && typeof dc.set_props === "function") { dc.set_props("sh-problem", {children: text}); }
  }
  function mark(on) {
    var results = document.getElementById("sh-results");
    document.body.classList.toggle("sh-busy", on);
    if (results) { results.setAttribute("aria-busy", on ? "true" : "false"); }
  }
  function later(ms) {
    if (timer) { clearTimeout(timer); }
    timer = setTimeout(function () {
      timer = null;
      if (pending === 0 && !awaiting) { mark(false); }
    }, ms);
  }
  function outputOf(init) {
    var body = init && typeof init.body === "string" ? init.body : "";
    return body.slice(0, 600);
  }
  function aboutResults(head) {
    return !NOT_RESULTS.some(function (id) { return head.indexOf(id) !== -1; });
  }
  window.siteharvestBusy = function () { mark(true); later(NO_REQUEST_MS); };

  window.fetch = function (resource, init) {
    var url = String((resource && resource.url) || resource || "");
    var head = outputOf(init);
    var counted = url.indexOf("_dash-update-component") !== -1 && aboutResults(head);
    var changesSpots = head.indexOf("sh-spots.data") !== -1;
    var bringsResults = head.indexOf("sh-status.children") !== -1;
    if (counted) {
      pending += 1;
      if (timer) { clearTimeout(timer); timer = null; }
      mark(true);
    }
    function settle() {
      pending = Math.max(0, pending - 1);
      if (pending === 0) { later(awaiting ? AWAIT_MS : QUIET_MS); }
    }
    function done(reply) {
      if (!counted) { return; }
      if (bringsResults) { awaiting = false; }
      if (changesSpots && reply && reply.status === 200 && typeof reply.clone === "function") {
        /* the spots changed only if the answer carries them; then their results are still to come */
        reply.clone().text().then(function (text) {
          if (text.indexOf('"sh-spots"') !== -1) { awaiting = true; }
        }, function () { /* unreadable: nothing more to wait for */ }).then(settle);
        return;
      }
      settle();
    }
    return sent.apply(this, arguments).then(function (reply) {
      done(reply);
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
    }, function (err) { awaiting = false; done(null); throw err; });
  };

  /* an edit in the spot's editor: the results are out of date from now on */
  function edited(event) {
    var t = event.target;
    if (t && t.closest && t.closest("#sh-editor")) { window.siteharvestBusy(); }
  }
  document.addEventListener("change", edited, true);
  document.addEventListener("keydown", function (event) { if (event.key === "Enter") { edited(event); } }, true);
})();
