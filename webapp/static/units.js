// The firing pages' °C / °F choice, remembered with the measuring page's (glowtemp.unit):
// a page opened without ?unit= switches to the remembered °F.
(function () {
  var asked = new URLSearchParams(location.search).get("unit");
  try {
    if (asked) localStorage.setItem("glowtemp.unit", asked);
    else if (localStorage.getItem("glowtemp.unit") === "f") location.replace("?unit=f" + location.hash);
  } catch (e) { /* private mode: not remembered */ }
})();
