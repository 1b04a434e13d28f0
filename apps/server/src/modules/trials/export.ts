import { Readable } from "node:stream";
import type { Sequelize } from "sequelize";
import { stringify } from "csv-stringify";
import type { User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { modelsOf } from "../../db/models.ts";
import { visibleProfile } from "../profiles/service.ts";
import { decodeSeries } from "./series-codec.ts";
import type { TrialSeries } from "./runner.ts";

/**
 * A stored trial run's full series out as CSV or JSON (issue 12), streamed row by row. The series is one
 * stored value (series-codec.ts; a 10-s run at 1 kHz is ~10,000 samples), decoded once; the text is never
 * built whole. Units in the CSV header; σ_min and λ in the Jacobian's metre-and-radian units. A run keeps
 * the TCP position, not its orientation, and no binding-limit code: `binding_limit` says which of the
 * flags the run records held the step back ("singularity-guard", "joint-rate", or "none").
 */
export async function loadRunSeries(db: Sequelize, actor: User, id: number): Promise<{ runId: number; series: TrialSeries }> {
  const run = await modelsOf(db).TrialRun.findByPk(id, { attributes: ["id", "profileId", "series"] });
  if (!run) throw new AppError(404, "not_found", "No such run.");
  await visibleProfile(db, actor, run.profileId);
  return { runId: run.id, series: decodeSeries(run.series) };
}

function row(s: TrialSeries, k: number): (number | string)[] {
  const n = s.n;
  return [
    s.t[k]!,
    ...Array.from(s.q.subarray(k * n, k * n + n)),
    ...Array.from(s.qdot.subarray(k * n, k * n + n)),
    s.tcp[3 * k]!, s.tcp[3 * k + 1]!, s.tcp[3 * k + 2]!,
    s.sigmaMin[k]!, s.lambda[k]!,
    s.guardHeld[k] ? "singularity-guard" : s.capBound[k] ? "joint-rate" : "none",
  ];
}

export function streamRunCsv(s: TrialSeries): Readable {
  const header = [
    "t_s",
    ...Array.from({ length: s.n }, (_, i) => `q${i + 1}_rad`),
    ...Array.from({ length: s.n }, (_, i) => `qdot${i + 1}_rad_s`),
    "tcp_x_m", "tcp_y_m", "tcp_z_m", "sigma_min_m", "lambda_m", "binding_limit",
  ];
  function* rows() {
    yield header;
    for (let k = 0; k < s.count; k++) yield row(s, k);
  }
  return Readable.from(rows()).pipe(stringify({ record_delimiter: "\r\n" }));
}

export function streamRunJson(runId: number, s: TrialSeries): Readable {
  function* parts() {
    yield `{"runId":${runId},"tickRateHz":${s.tickRateHz},"joints":${s.n},"units":{"t":"s","q":"rad (m for a prismatic joint)","qdot":"rad/s","tcp":"m","sigmaMin":"m/rad","lambda":"m/rad"},"samples":[`;
    for (let k = 0; k < s.count; k++) {
      const [t, ...rest] = row(s, k);
      const q = rest.slice(0, s.n), qdot = rest.slice(s.n, 2 * s.n), [x, y, z, sigmaMin, lambda, binding] = rest.slice(2 * s.n);
      yield `${k ? "," : ""}\n${JSON.stringify({ t, q, qdot, tcp: [x, y, z], sigmaMin, lambda, binding })}`;
    }
    yield "\n]}\n";
  }
  return Readable.from(parts());
}
