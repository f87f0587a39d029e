// The views the page offers, in tab order. A view is a module exporting an object
// { id, title, mount(root, ctx), draw(root, ctx) → status text }: mount builds its own controls and
// drawing areas once; draw asks the server for the current state and paints. To add a view,
// write its module and list it here; the page makes its tab, its panel and its address entry.
import { bandsView } from "./bands.js";
import { shapeView } from "./shape.js";
import { compareView } from "./compare.js";

export const VIEWS = [bandsView, shapeView, compareView];
