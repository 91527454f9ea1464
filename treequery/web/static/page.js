// The treequery page: pattern editor, results, counts and downloads over the JSON API.
// Text from a treebank is only ever put into the page with textContent; the drawings
// come from the server as escaped SVG and are parsed as XML, never as HTML.
"use strict";

const $ = (id) => document.getElementById(id);
const CHECK_DELAY_MS = 300;   // pause in typing before the pattern is checked
const CHART_BARS = 25;        // groups drawn in the bar chart (the table has them all)
const KWIC_CONTEXT = 70;      // characters of context on each side of the match
const SVG_NS = "http://www.w3.org/2000/svg";

// Each tab names itself, so that the server stops this tab's old search for a new one.
const TAB_ID = (window.crypto && crypto.randomUUID) ? crypto.randomUUID()
  : String(Math.random()).slice(2) + String(Date.now());

const state = {
  pattern: "",          // the pattern of the results shown
  countEmpty: false,
  offset: 0,
  limit: 10,
  total: null,          // results of the pattern, once counted
  more: false,
  resultVars: [],
  attributes: [],
};
let work = null;        // AbortController of this tab's running search or count
let checking = null;    // AbortController of the running syntax check
let checkTimer = null;

// ------------------------------------------------------------------ requests

async function post(path, body, signal) {
  const response = await fetch(path, {
    method: "POST", signal,
    headers: {"Content-Type": "application/json"},
    body: JSON.stringify(body),
  });
  let data;
  try {
    data = await response.json();
  } catch (error) {
    data = {error: {message: `the server answered ${response.status} without JSON`}};
  }
  return {status: response.status, data};
}

function newWork() {
  if (work) work.abort();
  work = new AbortController();
  return work.signal;
}

function failed(error) {
  if (error.name === "AbortError") return;   // replaced by a newer request
  setStatus(`The server did not answer (${error.message}). Is treequery serve still running?`);
}

function setStatus(text) {
  $("status").textContent = text;
}

function plural(number, noun) {
  return `${number.toLocaleString("en")} ${noun}${number === 1 ? "" : "s"}`;
}

// ------------------------------------------------------------------ pattern errors

function showPatternError(error) {
  const box = $("pattern-error");
  if (error.position === undefined || error.position === null) {
    $("error-where").textContent = "Error:";
    $("error-context").textContent = "";
  } else {
    $("error-where").textContent = `Line ${error.line}, column ${error.column}:`;
    $("error-context").textContent = caretLines(error);
  }
  $("error-message").textContent = error.message;
  $("error-hint").textContent = error.hint ? `Hint: ${error.hint}` : "";
  box.hidden = false;
  $("pattern").setAttribute("aria-invalid", "true");
  markPosition(error.position);
}

function caretLines(error) {
  const line = $("pattern").value.split("\n")[error.line - 1] || "";
  return `${line}\n${" ".repeat(error.column - 1)}^`;
}

function clearPatternError() {
  $("pattern-error").hidden = true;
  $("pattern").removeAttribute("aria-invalid");
  markPosition(null);
}

// The backdrop behind the transparent textarea repeats its text; the character at
// the error's position is wrapped in <mark>, so it shows highlighted in place.
function markPosition(position) {
  const backdrop = $("pattern-backdrop");
  backdrop.replaceChildren();
  if (position === null || position === undefined) return;
  const text = $("pattern").value;
  const at = text[position];
  const mark = document.createElement("mark");
  mark.className = "error-mark";
  mark.textContent = (at === undefined || at === "\n") ? " " : at;
  const rest = (at === undefined || at === "\n") ? text.slice(position) : text.slice(position + 1);
  backdrop.append(document.createTextNode(text.slice(0, position)), mark,
                  document.createTextNode(rest + "\n"));
  backdrop.scrollTop = $("pattern").scrollTop;
}

// The editor grows with its pattern (up to a screenful), so no line hides behind a scrollbar.
function fitEditor() {
  const editor = $("pattern");
  editor.style.height = "auto";
  editor.style.height = `${Math.min(editor.scrollHeight + 4, 0.6 * window.innerHeight)}px`;
}

function scheduleCheck() {
  fitEditor();
  clearTimeout(checkTimer);
  markPosition(null);
  checkTimer = setTimeout(checkPattern, CHECK_DELAY_MS);
}

async function checkPattern() {
  const pattern = $("pattern").value;
  if (checking) checking.abort();
  if (!pattern.trim()) {
    clearPatternError();
    return;
  }
  checking = new AbortController();
  try {
    const {status, data} = await post("/api/check", {pattern}, checking.signal);
    if (status === 200) {
      clearPatternError();
      setGroupKeys(data.result_vars);
    } else if (data.error) {
      showPatternError(data.error);
    }
  } catch (error) {
    if (error.name !== "AbortError") failed(error);
  }
}

function setGroupKeys(resultVars) {
  state.resultVars = resultVars;
  const select = $("count-by");
  const chosen = select.value;
  const options = [new Option("(no grouping: totals)", "")];
  for (const name of resultVars) {
    for (const attribute of state.attributes) {
      options.push(new Option(`${name}.${attribute}`, `${name}.${attribute}`));
    }
  }
  select.replaceChildren(...options);
  const keys = options.map((option) => option.value);
  select.value = keys.includes(chosen) ? chosen : (keys.includes(`${resultVars[0]}.label`)
    ? `${resultVars[0]}.label` : "");
}

// ------------------------------------------------------------------ searching

function currentRequest() {
  return {pattern: $("pattern").value, count_empty: $("count-empty").checked, tab: TAB_ID};
}

async function search(offset) {
  const request = currentRequest();
  if (!request.pattern.trim()) {
    setStatus("Type a pattern first.");
    $("pattern").focus();
    return;
  }
  const samePattern = request.pattern === state.pattern && request.count_empty === state.countEmpty;
  const limit = Number($("page-size").value);
  const signal = newWork();
  setStatus("Searching…");
  document.body.classList.add("busy");
  try {
    const {status, data} = await post("/api/search", {...request, offset, limit}, signal);
    if (status === 409) return;   // a newer search from this tab replaced it
    if (status === 400) {
      showTrouble(data.error);
      return;
    }
    if (status !== 200) {
      setStatus(data.error ? data.error.message : `The search failed (${status}).`);
      return;
    }
    clearPatternError();
    if (!samePattern) state.total = null;
    Object.assign(state, {pattern: request.pattern, countEmpty: request.count_empty,
                          offset: data.offset, limit: data.limit, more: data.more});
    setGroupKeys(data.result_vars);
    showResults(data);
    if (data.stopped) {
      setStatus(`Stopped at the time limit: ${data.message}. Showing what was found until then.`);
      updatePager();
      return;
    }
    if (state.total === null) await countTotal(request, signal);
    setStatus(pageSummary(data.results.length));
    updatePager();
  } catch (error) {
    failed(error);
  } finally {
    if (!signal.aborted) document.body.classList.remove("busy");
  }
}

// A pattern error goes beside the editor; any other bad request into the status line.
function showTrouble(error) {
  if (error.position !== undefined && error.position !== null) {
    showPatternError(error);
    setStatus("The pattern has an error; see above the results.");
  } else {
    setStatus(error.message);
  }
}

async function countTotal(request, signal) {
  const {status, data} = await post("/api/count", request, signal);
  if (status === 200 && !data.stopped) state.total = {results: data.results, trees: data.trees};
}

function pageSummary(shown) {
  if (shown === 0) return state.offset === 0 ? "No results." : "No results on this page.";
  const range = `Results ${state.offset + 1}–${state.offset + shown}`;
  if (!state.total) return `${range}.`;
  return `${range} of ${state.total.results.toLocaleString("en")} ` +
    `(in ${plural(state.total.trees, "tree")}).`;
}

function pageCount() {
  if (!state.total) return null;
  return Math.max(1, Math.ceil(state.total.results / state.limit));
}

function updatePager() {
  const page = Math.floor(state.offset / state.limit) + 1;
  const pages = pageCount();
  $("page-label").textContent = pages ? `Page ${page} of ${pages}` : `Page ${page}`;
  $("page-number").value = page;
  if (pages) $("page-number").max = pages;
  $("first-page").disabled = state.offset === 0;
  $("prev-page").disabled = state.offset === 0;
  $("next-page").disabled = !state.more;
  const any = state.pattern !== "" && (state.more || state.offset > 0 ||
    $("results").children.length > 0);
  $("download-csv").disabled = !any;
  $("download-jsonl").disabled = !any;
}

function goToPage(page) {
  if (!state.pattern) return;
  const pages = pageCount();
  const wanted = Math.max(1, pages ? Math.min(page, pages) : page);
  search((wanted - 1) * state.limit);
}

// ------------------------------------------------------------------ showing results

function showResults(data) {
  const items = data.results.map((result) => resultItem(result));
  $("results").replaceChildren(...items);
  $("results").start = data.offset + 1;
}

function resultItem(result) {
  const item = document.createElement("li");
  item.className = "result";
  const head = document.createElement("div");
  head.className = "result-head";
  const where = document.createElement("span");
  where.className = "location";
  where.textContent = `${result.location}  tree ${result.tree}`;
  head.append(where, bindingList(result.nodes));
  item.append(head, kwicLine(result.kwic));
  if (result.svg) item.append(drawing(result.svg));
  return item;
}

function bindingList(nodes) {
  const list = document.createElement("span");
  list.className = "bindings";
  Object.entries(nodes).forEach(([name, node], i) => {
    const entry = document.createElement("span");
    entry.className = `binding var-${i % 6}`;
    const label = document.createElement("b");
    label.textContent = `${name}=${node.label}`;
    entry.append(label, document.createTextNode(` “${node.words}”`));
    list.append(entry);
  });
  return list;
}

function kwicLine(kwic) {
  const line = document.createElement("p");
  line.className = "kwic";
  const left = document.createElement("span");
  left.className = "left";
  left.textContent = kwic.left.length > KWIC_CONTEXT
    ? "…" + kwic.left.slice(kwic.left.length - KWIC_CONTEXT + 1) : kwic.left;
  const match = document.createElement("mark");
  match.textContent = kwic.match;
  match.title = kwic.var;
  const right = document.createElement("span");
  right.className = "right";
  right.textContent = kwic.right.length > KWIC_CONTEXT
    ? kwic.right.slice(0, KWIC_CONTEXT - 1) + "…" : kwic.right;
  line.append(left, " ", match, " ", right);
  return line;
}

// The server escapes every label and word in the SVG; parsing it as XML (never as
// HTML) and importing the element keeps anything in it from running as script.
function drawing(svgText) {
  const figure = document.createElement("figure");
  figure.className = "tree";
  const parsed = new DOMParser().parseFromString(svgText, "image/svg+xml");
  const svg = parsed.documentElement;
  if (svg.namespaceURI !== SVG_NS || parsed.getElementsByTagName("parsererror").length) {
    figure.textContent = "(this tree could not be drawn)";
    return figure;
  }
  const node = document.importNode(svg, true);
  node.setAttribute("role", "img");
  const title = node.querySelector("title");
  node.setAttribute("aria-label", `Tree ${title ? title.textContent : ""}`);
  figure.append(node);
  return figure;
}

// ------------------------------------------------------------------ counting

async function runCount() {
  const request = currentRequest();
  if (!request.pattern.trim()) {
    setStatus("Type a pattern first.");
    return;
  }
  const by = $("count-by").value;
  const signal = newWork();
  setStatus("Counting…");
  try {
    const {status, data} = await post("/api/count", {...request, by: by ? [by] : []}, signal);
    if (status === 409) return;
    if (status !== 200) {
      showTrouble(data.error || {message: `The count failed (${status}).`});
      return;
    }
    clearPatternError();
    if (data.stopped) {
      setStatus(`Stopped at the time limit: ${data.message}`);
      $("count-summary").textContent = "";
      return;
    }
    showCounts(data, by);
    setStatus(`Counted ${plural(data.results, "result")} in ${plural(data.trees, "tree")}.`);
  } catch (error) {
    failed(error);
  }
}

function groupName(value) {
  if (value === null) return "(none)";
  if (value === "") return "(empty)";
  if (value === true) return "yes";
  if (value === false) return "no";
  return String(value);
}

function showCounts(data, by) {
  $("count-summary").textContent = `${plural(data.results, "result")} in ` +
    `${plural(data.trees, "tree")}` + (by ? `, in ${plural(data.groups_total, "group")} by ${by}` : "") +
    (data.groups_total > data.groups.length ? ` (the largest ${data.groups.length} listed)` : "");
  const table = $("count-table");
  const figure = $("count-chart-figure");
  table.hidden = !by;
  figure.hidden = !by;
  if (!by) return;
  $("count-key").textContent = by;
  const rows = data.groups.map((group) => {
    const row = document.createElement("tr");
    const share = data.results ? (100 * group.results / data.results) : 0;
    for (const text of [groupName(group.key[0]), group.results.toLocaleString("en"),
                        `${share.toFixed(1)} %`]) {
      const cell = document.createElement("td");
      cell.textContent = text;
      row.append(cell);
    }
    return row;
  });
  table.tBodies[0].replaceChildren(...rows);
  drawChart(data.groups.slice(0, CHART_BARS), by);
}

function svgElement(name, attributes) {
  const element = document.createElementNS(SVG_NS, name);
  for (const [key, value] of Object.entries(attributes)) element.setAttribute(key, value);
  return element;
}

function drawChart(groups, by) {
  const chart = $("count-chart");
  const barHeight = 20, labelWidth = 170, barWidth = 420, gap = 4;
  const largest = Math.max(1, ...groups.map((group) => group.results));
  const height = groups.length * (barHeight + gap) + gap;
  chart.setAttribute("viewBox", `0 0 ${labelWidth + barWidth + 70} ${height}`);
  chart.setAttribute("width", labelWidth + barWidth + 70);
  chart.setAttribute("height", height);
  const parts = [];
  groups.forEach((group, i) => {
    const y = gap + i * (barHeight + gap);
    const name = svgElement("text", {x: labelWidth - 8, y: y + 14, "text-anchor": "end",
                                     class: "chart-label"});
    const shown = groupName(group.key[0]);
    name.textContent = shown.length > 24 ? shown.slice(0, 23) + "…" : shown;
    const width = Math.max(1, barWidth * group.results / largest);
    const bar = svgElement("rect", {x: labelWidth, y, width, height: barHeight,
                                    class: "chart-bar"});
    const value = svgElement("text", {x: labelWidth + width + 6, y: y + 14,
                                      class: "chart-value"});
    value.textContent = group.results.toLocaleString("en");
    parts.push(name, bar, value);
  });
  chart.replaceChildren(...parts);
  $("count-chart-caption").textContent =
    `Results by ${by}` + (groups.length === CHART_BARS ? ` (the ${CHART_BARS} largest groups)` : "");
}

// ------------------------------------------------------------------ downloads

async function download(format) {
  if (!state.pattern) return;
  const body = {pattern: state.pattern, count_empty: state.countEmpty, format,
                tab: `${TAB_ID}:download`};
  setStatus(`Preparing the ${format === "csv" ? "CSV" : "JSON Lines"} file of every result…`);
  try {
    const response = await fetch("/api/export", {
      method: "POST", headers: {"Content-Type": "application/json"}, body: JSON.stringify(body),
    });
    if (!response.ok) {
      const data = await response.json();
      setStatus(data.error ? data.error.message : `Stopped: ${data.message}`);
      return;
    }
    const blob = await response.blob();
    const link = document.createElement("a");
    link.href = URL.createObjectURL(blob);
    link.download = `treequery-results.${format}`;
    document.body.append(link);
    link.click();
    link.remove();
    setTimeout(() => URL.revokeObjectURL(link.href), 10000);
    setStatus(`Downloaded ${link.download}.`);
  } catch (error) {
    failed(error);
  }
}

// ------------------------------------------------------------------ explain, info, help

async function explain() {
  const request = currentRequest();
  if (!request.pattern.trim()) return;
  try {
    const {status, data} = await post("/api/explain", request);
    if (status !== 200) {
      showTrouble(data.error);
      return;
    }
    $("explain-output").textContent = data.text;
    $("explain-panel").hidden = false;
    $("explain-panel").scrollIntoView({block: "nearest"});
  } catch (error) {
    failed(error);
  }
}

async function showInfo() {
  try {
    const response = await fetch("/api/info");
    const info = await response.json();
    state.attributes = info.attributes;
    const limit = info.timeout ? ` · time limit ${info.timeout} s per search` : "";
    $("index-info").textContent = `${info.index}: ${plural(info.trees, "tree")}, ` +
      `${plural(info.tokens, "token")} in ${plural(info.documents, "document")}${limit}`;
  } catch (error) {
    failed(error);
  }
}

function toggleHelp(open) {
  $("help").hidden = !open;
  $("help-toggle").setAttribute("aria-expanded", String(open));
  if (open) $("help").querySelector("button.example").focus();
  else $("help-toggle").focus();
}

function useExample(button) {
  const editor = $("pattern");
  editor.value = button.dataset.pattern || button.textContent;
  editor.focus();
  scheduleCheck();
}

function showView(name) {
  const results = name === "results";
  $("tab-results").setAttribute("aria-selected", String(results));
  $("tab-counts").setAttribute("aria-selected", String(!results));
  $("results-panel").hidden = !results;
  $("counts-panel").hidden = results;
}

// ------------------------------------------------------------------ wiring

function onKey(event) {
  if (event.key === "Escape" && !$("help").hidden) {
    toggleHelp(false);
    return;
  }
  if (event.altKey && (event.key === "ArrowRight" || event.key === "PageDown")) {
    if (!$("next-page").disabled) search(state.offset + state.limit);
    event.preventDefault();
  } else if (event.altKey && (event.key === "ArrowLeft" || event.key === "PageUp")) {
    if (!$("prev-page").disabled) search(Math.max(0, state.offset - state.limit));
    event.preventDefault();
  }
}

function wire() {
  const editor = $("pattern");
  editor.addEventListener("input", scheduleCheck);
  editor.addEventListener("scroll", () => { $("pattern-backdrop").scrollTop = editor.scrollTop; });
  editor.addEventListener("keydown", (event) => {
    if (event.key === "Enter" && (event.ctrlKey || event.metaKey)) {
      event.preventDefault();
      search(0);
    }
  });
  $("search").addEventListener("click", () => search(0));
  $("first-page").addEventListener("click", () => search(0));
  $("prev-page").addEventListener("click", () => search(Math.max(0, state.offset - state.limit)));
  $("next-page").addEventListener("click", () => search(state.offset + state.limit));
  $("page-number").addEventListener("change", (event) => goToPage(Number(event.target.value)));
  $("page-size").addEventListener("change", () => { if (state.pattern) search(0); });
  $("download-csv").addEventListener("click", () => download("csv"));
  $("download-jsonl").addEventListener("click", () => download("jsonl"));
  $("tab-results").addEventListener("click", () => showView("results"));
  $("tab-counts").addEventListener("click", () => showView("counts"));
  $("count").addEventListener("click", runCount);
  $("explain").addEventListener("click", explain);
  $("help-toggle").addEventListener("click", () => toggleHelp($("help").hidden));
  $("help-close").addEventListener("click", () => toggleHelp(false));
  for (const button of document.querySelectorAll("button.example")) {
    button.addEventListener("click", () => useExample(button));
  }
  document.addEventListener("keydown", onKey);
  showInfo();
}

wire();
