// The upload page of `nffit serve` (docs/service.md). No inline script: the page's Content-Security-Policy is
// default-src 'self'. Every name from the user's files reaches the page through textContent, never as markup.
'use strict';

(function () {
  const chosen = new Map(); // file name -> File
  const $ = (id) => document.getElementById(id);
  let readingOptions = [];

  function headers() {
    const token = $('token').value.trim();
    return token ? { Authorization: 'Bearer ' + token } : {};
  }

  function isManifest(name) { return name.toLowerCase() === 'manifest.csv'; }

  function fromPattern(name) {
    const text = $('pattern').value;
    if (!text) { return ''; }
    try {
      const m = new RegExp(text).exec(name);
      return m ? (m.length > 1 ? m[1] : m[0]) : '';
    } catch (e) {
      return '';
    }
  }

  function cell(row, text, cls) {
    const td = document.createElement('td');
    td.textContent = text;
    if (cls) { td.className = cls; }
    row.appendChild(td);
    return td;
  }

  function render() {
    const body = $('runs').querySelector('tbody');
    const values = new Map([...body.querySelectorAll('input')].map((i) => [i.dataset.file, i.value]));
    body.replaceChildren();
    const names = [...chosen.keys()].sort();
    const manifest = names.some(isManifest);
    $('manifest-note').hidden = !manifest;
    for (const name of names) {
      const row = document.createElement('tr');
      cell(row, name);
      cell(row, (chosen.get(name).size / 1024).toFixed(1) + ' KiB', 'size');
      const td = cell(row, '');
      if (!manifest && !isManifest(name)) {
        const input = document.createElement('input');
        input.type = 'text';
        input.inputMode = 'decimal';
        input.dataset.file = name;
        input.setAttribute('aria-label', 'parameter value of ' + name);
        input.value = values.get(name) || '';
        input.placeholder = fromPattern(name);
        td.appendChild(input);
      }
      const remove = document.createElement('button');
      remove.type = 'button';
      remove.className = 'remove';
      remove.textContent = 'remove';
      remove.addEventListener('click', () => { chosen.delete(name); render(); });
      cell(row, '').appendChild(remove);
      body.appendChild(row);
    }
    $('empty').hidden = names.length > 0;
    $('go').disabled = names.filter((n) => !isManifest(n)).length === 0;
  }

  function add(files) {
    for (const f of files) { chosen.set(f.name, f); }
    render();
  }

  function state(text, failed) {
    $('state').textContent = text;
    $('state').className = failed ? 'failed' : '';
  }

  async function loadOptions() {
    const r = await fetch('/api/options', { headers: headers() });
    if (r.status === 401) { $('access').hidden = false; return; }
    readingOptions = (await r.json()).reading_options;
    const box = $('options');
    box.replaceChildren();
    for (const o of readingOptions) {
      const label = document.createElement('label');
      const span = document.createElement('span');
      span.textContent = o.name;
      const input = document.createElement('input');
      input.type = o.switch ? 'checkbox' : 'text';
      input.name = o.name;
      input.dataset.option = o.name;
      label.append(span, input);
      box.appendChild(label);
    }
  }

  async function submit() {
    const form = new FormData();
    for (const [name, file] of chosen) { form.append('files', file, name); }
    const manifest = [...chosen.keys()].some(isManifest);
    if (!manifest) {
      if ($('pattern').value) { form.append('param_pattern', $('pattern').value); }
      for (const input of $('runs').querySelectorAll('input[data-file]')) {
        if (input.value.trim()) { form.append('param.' + input.dataset.file, input.value.trim()); }
      }
    }
    for (const input of $('options').querySelectorAll('input[data-option]')) {
      if (input.type === 'checkbox') {
        if (input.checked) { form.append(input.dataset.option, 'true'); }
      } else if (input.value.trim()) {
        form.append(input.dataset.option, input.value.trim());
      }
    }
    $('go').disabled = true;
    $('result').hidden = true;
    state('uploading…');
    try {
      const r = await fetch('/api/analyses', { method: 'POST', body: form, headers: headers() });
      const answer = await r.json();
      if (r.status === 401) { $('access').hidden = false; state('this service needs its access token (above)', true); return; }
      if (r.status !== 202) { state('not accepted (' + r.status + '): ' + answer.error.message, true); return; }
      await follow(answer.id);
    } catch (e) {
      state('the service could not be reached (' + e.message + ')', true);
    } finally {
      $('go').disabled = false;
    }
  }

  async function follow(id) {
    for (;;) {
      const r = await fetch('/api/analyses/' + id, { headers: headers() });
      const job = await r.json();
      if (job.status === 'done') { show(id, job.report); return; }
      if (job.status === 'failed') { state('the analysis failed (' + job.error.code + '):\n' + job.error.message, true); return; }
      state(job.status === 'queued' ? 'waiting for a worker…' : 'analysing…');
      await new Promise((resolve) => setTimeout(resolve, 1000));
    }
  }

  function show(id, report) {
    const onset = report.onset.recommended;
    const unit = report.param_units ? ' ' + report.param_units : '';
    $('onset').textContent = onset.value === null
      ? 'not found (' + onset.reason + ')'
      : onset.value.toPrecision(8) + (onset.se === null ? '' : ' ± ' + onset.se.toPrecision(2)) + unit + ' (standard error; basis: ' + onset.basis + ')';
    $('page').href = '/analyses/' + id + '/';
    $('zip').href = '/analyses/' + id + '/report.zip';
    $('json').href = '/analyses/' + id + '/report.json';
    $('result').hidden = false;
    state('done');
  }

  document.addEventListener('DOMContentLoaded', () => {
    const drop = $('drop');
    drop.addEventListener('dragover', (e) => { e.preventDefault(); drop.classList.add('over'); });
    drop.addEventListener('dragleave', () => drop.classList.remove('over'));
    drop.addEventListener('drop', (e) => { e.preventDefault(); drop.classList.remove('over'); add(e.dataTransfer.files); });
    $('files').addEventListener('change', (e) => { add(e.target.files); e.target.value = ''; });
    $('pattern').addEventListener('input', render);
    $('token').addEventListener('change', loadOptions);
    $('go').addEventListener('click', submit);
    loadOptions();
    render();
  });
})();
