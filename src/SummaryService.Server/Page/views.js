// The views the page offers, in tab order. A view is a module exporting an object
// { id, title, mount(root, ctx), draw(root, ctx) → status text }: mount builds its own controls and
// drawing areas once; draw asks the server for the current state and paints. ctx holds the state,
// the chosen metric's labels, the span, an abort signal and set(update) to change the state. A view
// may declare `settings` (name → default text) of its own; they live in the address like the shared
// ones. To add a view, write its module and list it here; the page makes its tab and its panel.
import { bandsView } from "./bands.js";
import { shapeView } from "./shape.js";
import { compareView } from "./compare.js";
import { standoutView } from "./standout.js";

export const VIEWS = [bandsView, shapeView, compareView, standoutView];
