/* Live requests the server refused with an answer htmx does not swap (4xx other than 422, 5xx) or that never
   arrived: their message is shown at the top of the page instead of being lost.  No inline script (CSP). */
(function () {
  "use strict";
  function show(text) {
    var box = document.getElementById("live-error");
    if (!box) { return; }
    box.textContent = text;
    box.hidden = false;
  }
  function hide() {
    var box = document.getElementById("live-error");
    if (box && !box.hidden) { box.hidden = true; box.textContent = ""; }
  }
  document.addEventListener("htmx:responseError", function (event) {
    var xhr = event.detail.xhr;
    var type = (xhr.getResponseHeader("Content-Type") || "");
    var text = type.indexOf("text/plain") === 0 ? xhr.responseText.trim() : "";
    if (!text || text.length > 400) {
      text = xhr.status === 403 ? "Your role does not allow this change." :
        (xhr.status >= 500 ? "The server could not answer; nothing was changed. Try again in a moment." :
          "This change could not be used (" + xhr.status + "); nothing was saved. Reload the page.");
    }
    show(text);
  });
  document.addEventListener("htmx:sendError", function () {
    show("The server could not be reached; check the network. Nothing was saved.");
  });
  document.addEventListener("htmx:afterSwap", hide);

  /* On the plan page held upright the options stand above the tables: after a change to the options the
     girths table is brought into view (nearest edge, so the field just typed in stays on screen). */
  document.addEventListener("htmx:afterSwap", function (event) {
    var target = event.detail.target;
    if (!target || target.id !== "plan-result") { return; }
    var typed = event.detail.requestConfig && event.detail.requestConfig.triggeringEvent &&
      event.detail.requestConfig.triggeringEvent.target;
    if (!typed || !typed.closest || !typed.closest("fieldset.options")) { return; }
    var table = document.getElementById("levels-heading");
    if (!table) { return; }
    var box = table.closest("section").getBoundingClientRect();
    if (box.top > window.innerHeight - 120 || box.bottom < 0) {
      table.closest("section").scrollIntoView({block: "nearest"});
    }
  });
})();
