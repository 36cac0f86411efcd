// Clicking a summary sentence lights up every piece of its source span and scrolls
// it into view; without this script the link still scrolls to the span.
"use strict";
function lightSpan(key) {
  document.querySelectorAll("mark.lit").forEach(function (m) { m.classList.remove("lit"); });
  var pieces = document.querySelectorAll("mark[data-spans~='" + key.replace(/[^A-Za-z0-9-]/g, "") + "']");
  pieces.forEach(function (m) { m.classList.add("lit"); });
  var target = document.getElementById(key) || pieces[0];
  if (target) { target.scrollIntoView({block: "center"}); }
}
document.addEventListener("click", function (event) {
  var link = event.target.closest("a.sentence");
  if (!link) { return; }
  event.preventDefault();
  var key = link.getAttribute("data-span");
  history.replaceState(null, "", "#" + key);
  lightSpan(key);
});
document.addEventListener("DOMContentLoaded", function () {
  if (location.hash.indexOf("#src-") === 0) { lightSpan(location.hash.slice(1)); }
});
