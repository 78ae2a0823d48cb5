// Dark studio view by default; a sunlight view with dark text on white for outdoors.
// The choice is remembered on this device.
const KEY = "glowtemp.theme";
const root = document.documentElement;
const button = document.getElementById("theme-switch");

function show(theme) {
  root.dataset.theme = theme;
  const sunny = theme === "light";
  button.setAttribute("aria-pressed", String(sunny));
  button.textContent = sunny ? "Studio view" : "Sunlight view";
}

button.addEventListener("click", () => {
  const next = root.dataset.theme === "light" ? "dark" : "light";
  try { localStorage.setItem(KEY, next); } catch (e) { /* private mode: not remembered */ }
  show(next);
});
show(root.dataset.theme === "light" ? "light" : "dark");
