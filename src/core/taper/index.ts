/** Taper registry: the scenario's `taper.kind` names one of these. */
import type { Taper } from "./contract.js";
import { uniformTaper } from "./uniform.js";
import { taylorTaper } from "./taylor.js";
import { chebyshevTaper } from "./chebyshev.js";

export type TaperSpec =
  | { kind: "uniform" }
  | { kind: "taylor"; sidelobeDb: number; nbar: number }
  | { kind: "chebyshev"; sidelobeDb: number };

export function makeTaper(spec: TaperSpec): Taper {
  switch (spec.kind) {
    case "uniform":
      return uniformTaper;
    case "taylor":
      return taylorTaper(spec.sidelobeDb, spec.nbar);
    case "chebyshev":
      return chebyshevTaper(spec.sidelobeDb);
  }
}
export type { Taper, TaperInput } from "./contract.js";
