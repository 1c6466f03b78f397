/* global document */
// Reads a chosen CSV file into its text box, so the import is an ordinary form post and a refused
// import shows the same text again. Nothing is sent until the organiser presses Import.
for (const input of document.querySelectorAll('input[type=file][data-fills]')) {
  input.addEventListener('change', () => {
    const file = input.files && input.files[0];
    const target = document.getElementById(input.dataset.fills);
    if (!file || !target) return;
    file.text().then((text) => {
      target.value = text;
    });
  });
}
