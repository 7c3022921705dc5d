/**
 * anywidget module of strayline's `RowTable`.
 *
 * All state lives in the widget's synced traits, which Python owns; the view
 * reads them and answers user actions with `model.send(request)`.
 */
import type { AnyWidget } from "@anywidget/types";
import { mountTable } from "./table";
import type { TableTraits } from "./types";

const widget: AnyWidget<TableTraits> = {
  initialize() {
    // Nothing is shared between views: each view reads the traits itself.
  },
  render({ model, el }) {
    return mountTable(model, el);
  },
};

export default widget;
