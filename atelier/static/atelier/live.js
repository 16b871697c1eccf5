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
})();
