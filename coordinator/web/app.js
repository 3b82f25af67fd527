// fvsweep status page: polls the coordinator's JSON API and redraws.
// Every text from the API goes into the page through textContent; the
// one exception is the tables fragment, which the server renders with
// html/template (escaped).
"use strict";

const pollEvery = 1000; // ms
let chosen = decodeURIComponent(location.hash.slice(1)) || "";
let lastTablesHTML = null;
let tablesTag = ""; // ETag of the tables shown: the server answers 304 while they stand

function el(tag, attrs, ...kids) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs || {})) {
    if (k === "class") e.className = v;
    else if (k.startsWith("data-")) e.setAttribute(k, v);
    else e[k] = v;
  }
  for (const k of kids) e.append(k instanceof Node ? k : document.createTextNode(String(k)));
  return e;
}

async function getJSON(path) {
  return (await fetchJSON(path, "")).body;
}

// fetchJSON fetches path and returns its body and ETag; with tag (an
// ETag) the body is null when the server says the answer has not changed.
async function fetchJSON(path, tag) {
  const headers = tag ? { "If-None-Match": tag } : {};
  const r = await fetch(path, { credentials: "same-origin", cache: "no-store", headers });
  if (r.status === 304) return { body: null, tag };
  let body;
  try { body = await r.json(); } catch (e) { body = null; }
  if (!r.ok) throw new Error((body && body.error) || r.status + " " + r.statusText);
  return { body, tag: r.headers.get("ETag") || "" };
}

function stateOf(s) {
  if (s.canceled) return ["canceled", "canceled"];
  if (s.done + s.failed >= s.jobs_total) return ["complete", "complete"];
  if (s.running > 0) return ["active", "running"];
  return ["waiting", "waiting for workers"];
}

function pct(n, total) { return total > 0 ? (100 * n / total).toFixed(2) + "%" : "0%"; }

// span is a duration in seconds as "1 h 02 min", "3 min 20 s" or "12 s".
function span(sec) {
  sec = Math.max(0, Math.round(sec));
  const h = Math.floor(sec / 3600), m = Math.floor(sec % 3600 / 60), s = sec % 60;
  if (h > 0) return `${h} h ${String(m).padStart(2, "0")} min`;
  if (m > 0) return `${m} min ${String(s).padStart(2, "0")} s`;
  return `${s} s`;
}

// rate is a rate per second with three significant digits.
function rate(x) { return x >= 1000 ? x.toExponential(2).replace("e+", "e") : x.toPrecision(3); }

// jobLine describes a running job: case, group, grid, how long it has run
// and, where the worker tells it, how far it has got (t/t_end for fv2d).
function jobLine(j) {
  const grid = j.nx ? (j.ny > 1 ? `${j.nx}×${j.ny}` : `nx=${j.nx}`) : j.job_id.slice(0, 10);
  const parts = [j.case || j.sweep, j.group, grid].filter(Boolean);
  const done = j.progress == null ? "" : `, ${Math.floor(100 * j.progress)} % of t_end`;
  return `${parts.join(" · ")} (${span(j.elapsed_s)}${done})`;
}

let progress = null; // the chosen sweep's Progress, from api/sweeps/NAME/progress

// pick follows the sweep named in the address, else the first one still
// running, else the latest.
function pick(list) {
  if (list.length === 0 || list.some(s => s.sweep === chosen)) return;
  const active = list.find(s => s.done + s.failed < s.jobs_total && !s.canceled);
  chosen = (active || list[list.length - 1]).sweep;
}

function drawSweeps(list) {
  const box = document.getElementById("sweeps");
  if (list.length === 0) {
    box.replaceChildren(el("p", { class: "quiet" }, "No sweep submitted yet."));
    return;
  }
  box.replaceChildren(...list.map(s => {
    const [cls, word] = stateOf(s);
    // After a cancel the jobs still queued will not run: they show as canceled.
    const left = s.canceled ? "canceled" : "queued";
    const bar = el("div", { class: "bar", title: `${s.done} done, ${s.failed} failed, ${s.running} running, ${s.queued} ${left}` });
    for (const part of ["done", "failed", "running", "queued"]) {
      const seg = el("span", { class: part === "queued" ? left : part });
      seg.style.width = pct(s[part], s.jobs_total);
      bar.append(seg);
    }
    const n = (k, label) => [el("b", { class: "n-" + (k === "queued" ? left : k) }, s[k]), " " + label];
    const p = progress && progress.sweep === s.sweep ? progress : null;
    const row = el("div", { class: "sweep" + (s.sweep === chosen ? " chosen" : ""), "data-sweep": s.sweep, tabIndex: 0 },
      el("div", { class: "name" }, s.sweep, el("span", { class: "file" }, s.spec_file || "")),
      bar,
      el("span", { class: "state " + cls }, word),
      el("div", { class: "counts" },
        el("span", { class: "progress" }, `${s.done + s.failed} of ${s.jobs_total} jobs finished (${pct(s.done + s.failed, s.jobs_total)})`),
        " · ", ...n("done", "done"), " · ", ...n("failed", "failed"), " · ", ...n("running", "running"),
        " · ", ...n("queued", left)),
      p ? pace(s, p) : el("div", { class: "pace quiet" }, "submitted " + new Date(s.created).toLocaleString()));
    // Jobs of an outside program that no live worker offers wait for one.
    for (const [label, k] of Object.entries(s.waiting || {})) {
      row.querySelector(".counts").append(" · ", el("b", { class: "n-waiting" }, k), ` waiting for a worker with ${label}`);
    }
    const choose = () => { chosen = s.sweep; location.hash = encodeURIComponent(s.sweep); lastTablesHTML = null; poll(); };
    row.addEventListener("click", choose);
    row.addEventListener("keydown", e => { if (e.key === "Enter" || e.key === " ") choose(); });
    return row;
  }));
}

// pace is the chosen sweep's elapsed time, throughput, ETA and last change.
function pace(s, p) {
  const finished = s.done + s.failed >= s.jobs_total;
  const bits = [el("span", { class: "elapsed" }, (finished ? "took " : "elapsed ") + span(p.elapsed_s))];
  if (p.jobs_per_s != null) bits.push(el("span", { class: "rate" }, `${rate(p.jobs_per_s)} jobs/s · ${rate(p.cost_per_s)} cell updates/s (est.)`));
  if (s.canceled) bits.push(el("span", { class: "eta" }, `canceled: ${p.canceled} job${p.canceled === 1 ? "" : "s"} will not run`));
  else if (!finished) bits.push(el("span", { class: "eta" }, p.eta_s != null ? "ETA " + span(p.eta_s) : "ETA: estimating…"));
  bits.push(el("span", { class: "changed" }, "last change " + new Date(p.last_change).toLocaleTimeString()));
  const box = el("div", { class: "pace" });
  bits.forEach((b, i) => { if (i) box.append(" · "); box.append(b); });
  return box;
}

function ago(seconds) {
  if (seconds < 1) return "just now";
  if (seconds < 90) return Math.round(seconds) + " s ago";
  return Math.round(seconds / 60) + " min ago";
}

function drawWorkers(v) {
  const body = document.querySelector("#workers tbody");
  if (v.workers.length === 0) {
    body.replaceChildren(el("tr", {}, el("td", { colSpan: 9, class: "quiet t" }, "No worker has reported.")));
    return;
  }
  const heads = [...document.querySelectorAll("#workers thead th")].map(th => th.textContent);
  body.replaceChildren(...v.workers.map(w => {
    const busy = Math.min(1, Math.max(0, w.busy_recent));
    const meter = el("span", { class: "meter" }, el("span"));
    meter.firstChild.style.width = (100 * busy).toFixed(0) + "%";
    const jobs = (w.jobs || []).map(j => el("div", { class: "job", title: `${j.sweep}/${j.job_id}` }, jobLine(j)));
    const interval = w.every / 1e9; // nanoseconds in the report
    const row = el("tr", { "data-worker": w.id },
      el("td", { class: "t" }, w.id), el("td", { class: "t" }, w.host), el("td", {}, w.cores), el("td", {}, w.concurrency),
      el("td", { class: "busy", title: "share of its slots' time busy over the last minute" }, meter, (100 * busy).toFixed(0) + " %"),
      el("td", {}, w.done), el("td", {}, w.failed),
      el("td", { class: "t running-now" }, ...(jobs.length ? jobs : [el("span", { class: "quiet" }, "idle")])),
      el("td", { class: w.seen_ago_s > 2 * interval ? "stale" : "" }, ago(w.seen_ago_s)));
    label(row, heads);
    return row;
  }));
}

function drawFailures(fails) {
  const box = document.getElementById("failures");
  if (fails.length === 0) { box.replaceChildren(); return; }
  const heads = ["job", "study", "differing parameters", "attempts", "worker", "reason"];
  // Only the parameters that tell the study's jobs apart (from progress);
  // all of them until it has come.
  const short = (progress && progress.failure_params) || {};
  const rows = fails.map(f => label(el("tr", {},
    el("td", { class: "t job" }, f.job_id.slice(0, 12)), el("td", {}, f.study),
    el("td", { class: "t wrap params" }, f.job_id in short ? short[f.job_id] || "–" : f.params),
    el("td", {}, f.attempts), el("td", { class: "t" }, f.worker || "–"), el("td", { class: "t wrap reason" }, f.error)), heads));
  box.replaceChildren(el("div", { class: "failures" },
    el("h3", {}, `${fails.length} failed job${fails.length === 1 ? "" : "s"}`),
    el("table", {}, el("thead", {}, el("tr", {}, ...heads.map((h, i) =>
      el("th", { class: i === 1 || i === 3 ? "" : "t" }, h)))), el("tbody", {}, ...rows))));
}

// label gives each cell of row the heading of its column (data-label),
// which the narrow layout shows beside the value; it returns row.
function label(row, heads) {
  [...row.children].forEach((td, i) => { if (heads[i]) td.dataset.label = heads[i]; });
  return row;
}

// labelTables labels the cells of the server's tables by their columns.
function labelTables(box) {
  for (const t of box.querySelectorAll("table")) {
    const rows = [...t.querySelectorAll("tr")];
    if (rows.length === 0) continue;
    const heads = [...rows[0].children].map(c => c.textContent);
    rows[0].classList.add("head");
    for (const r of rows.slice(1)) label(r, heads);
  }
}

async function drawTables() {
  const note = document.getElementById("detail-note");
  const title = document.getElementById("h-detail");
  if (!chosen) return;
  title.textContent = "Convergence: " + chosen;
  try {
    const path = "api/sweeps/" + encodeURIComponent(chosen) + "/tables";
    const got = await fetchJSON(path, lastTablesHTML === null ? "" : tablesTag);
    if (got.body === null) return; // unchanged
    const v = got.body;
    tablesTag = got.tag;
    // The JSON is that of 'fvsweep table --format json': a grid is still to
    // come while its status is neither done nor failed.
    const n = { running: 0, queued: 0, canceled: 0 };
    for (const s of v.studies || []) for (const g of s.groups || []) for (const r of g.rows || []) {
      if (r.status in n) n[r.status]++;
    }
    const pending = n.running + n.queued;
    note.className = "quiet";
    note.textContent = pending > 0
      ? `${pending} grid${pending === 1 ? "" : "s"} still to come (${n.running} running, ${n.queued} queued); the tables fill in as results are stored.`
      : n.canceled > 0 ? `${n.canceled} grid${n.canceled === 1 ? "" : "s"} canceled before they ran.` : "Every grid has a result.";
    drawFailures(v.failures || []);
    // The same tables as HTML, rendered and escaped by the server.
    const r = await fetch(path + ".html", { credentials: "same-origin", cache: "no-store" });
    if (!r.ok) throw new Error(r.status + " " + r.statusText);
    const html = await r.text();
    if (html !== lastTablesHTML) {
      const box = document.getElementById("tables");
      box.innerHTML = html;
      labelTables(box);
      lastTablesHTML = html;
    }
  } catch (e) {
    note.className = "error";
    note.textContent = "Tables unavailable: " + e.message;
    lastTablesHTML = null;
  }
}

let timer = null;
let polls = 0;
let busy = false, again = false;

// poll fetches and redraws once, then again after pollEvery; a call while
// one is in flight (a click) makes it run once more at its end.
async function poll() {
  if (busy) { again = true; return; }
  busy = true;
  clearTimeout(timer);
  const pulse = document.getElementById("pulse");
  try {
    const [st, ws] = await Promise.all([getJSON("api/sweeps"), getJSON("api/workers")]);
    pick(st.sweeps);
    progress = null;
    if (chosen) {
      try { progress = await getJSON("api/sweeps/" + encodeURIComponent(chosen) + "/progress"); } catch (e) { progress = null; }
    }
    // The pulse changes with the first data drawn, never after it.
    pulse.className = "pulse";
    pulse.textContent = `${ws.workers.length} worker${ws.workers.length === 1 ? "" : "s"} live · refreshed ${new Date().toLocaleTimeString()}`;
    drawSweeps(st.sweeps);
    drawWorkers(ws);
    await drawTables();
    document.body.dataset.polls = String(++polls);
  } catch (e) {
    pulse.className = "pulse lost";
    pulse.textContent = "coordinator not reachable (" + e.message + "); retrying";
  }
  busy = false;
  if (again) { again = false; poll(); return; }
  timer = setTimeout(poll, pollEvery);
}

window.addEventListener("hashchange", () => {
  const h = decodeURIComponent(location.hash.slice(1));
  if (h && h !== chosen) { chosen = h; lastTablesHTML = null; poll(); }
});
poll();
