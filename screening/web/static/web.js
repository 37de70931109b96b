// screening: after the page part is replaced (htmx), move the keyboard focus to the element the new part
// marks with autofocus (the answer's heading, or the field with a message), so that keyboard and
// screen-reader users land on the answer.
document.addEventListener("htmx:afterSwap", function (event) {
  var target = event.detail && event.detail.elt ? event.detail.elt : document;
  var el = (target.querySelector ? target.querySelector("[autofocus]") : null) || document.querySelector("#work [autofocus]");
  if (el) { el.focus(); if (el.scrollIntoView) { el.scrollIntoView({block: "center"}); } }
});
