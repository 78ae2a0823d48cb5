// Apply the remembered theme before the first paint, so the page never flashes (loaded in <head>).
try { var t = localStorage.getItem("glowtemp.theme"); if (t) document.documentElement.dataset.theme = t; } catch (e) {}
