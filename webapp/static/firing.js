// A firing's page: name the chosen photo, and refuse to send the reading form without one.
(function () {
  var form = document.getElementById("reading-form");
  var chosen = document.getElementById("chosen-photo");
  form.addEventListener("change", function (event) {
    if (event.target.type === "file" && event.target.files.length) chosen.textContent = "Photo: " + event.target.files[0].name;
  });
  form.addEventListener("submit", function (event) {
    var files = form.querySelectorAll("input[type=file]");
    var any = Array.prototype.some.call(files, function (input) { return input.files.length > 0; });
    if (!any) { event.preventDefault(); chosen.textContent = "Take or choose a photo first."; return; }
    document.getElementById("reading-submit").disabled = true;
    document.getElementById("reading-status").hidden = false;
  });
})();
