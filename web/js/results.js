// Result tables of a single-state analysis: the recommended D0, warnings, every method side by
// side, vibrational constants, the order-selection table and the assumptions. Every number is
// converted and rounded by the wasm module (format_energy / format_number).

import { el, clear, table, $ } from './dom.js';

export class Results {
  constructor(wasm) {
    this.wasm = wasm;
  }

  energy(v, s, unit) {
    if (v === null || v === undefined) return ['—', null];
    return this.wasm.format_energy(v, s ?? undefined, unit);
  }

  pm(v, s, unit) {
    const [a, b] = this.energy(v, s, unit);
    return b ? `${a} ± ${b}` : a;
  }

  num(v, s, digits = 5) {
    if (v === null || v === undefined) return '—';
    const [a, b] = this.wasm.format_number(v, s ?? undefined, digits);
    return b ? `${a} ± ${b}` : a;
  }

  render(doc, unitToken, unitLabel) {
    $('results').hidden = false;
    if (doc.format === 'rungs-band-analysis') {
      this.renderBands(doc, unitToken, unitLabel);
      return;
    }
    this.renderFar(doc.far_points ?? []);
    this.renderRecommended(doc, unitToken, unitLabel);
    clear($('estimates')).append(this.estimatesTable(doc, unitToken, unitLabel));
    clear($('constants')).append(...this.constantsTables(doc.constants, doc.morse, unitToken, unitLabel));
    this.renderOrders(doc);
    this.renderLoop(doc, unitToken, unitLabel);
    this.renderAssumptions(doc);
  }

  /**
   * Points far outside the rest, first of all: what core found, each with one action that
   * excludes its row with core's reason filled in (`onExclude(row, reason)`, set by the page).
   */
  renderFar(far) {
    const host = clear($('far-points'));
    host.hidden = far.length === 0;
    if (!far.length) return;
    host.append(el('p', {}, el('strong', {}, far.length === 1 ? 'One point lies far outside the rest. ' : `${far.length} points lie far outside the rest. `),
      'Every result below still includes ', far.length === 1 ? 'it' : 'them', '; it is marked ⚠ in the row table and in the figures.'));
    const list = el('ul', {});
    for (const f of far) {
      const where = f.row === null || f.row === undefined ? `v = ${f.v}` : `Row ${f.row} (v = ${f.v})`;
      list.append(el('li', {}, `${where}: ${f.reason} `,
        f.row === null || f.row === undefined ? '' : el('button', {
          type: 'button', class: 'exclude-far', 'data-row': f.row,
          onclick: () => this.onExclude?.(f.row, f.reason),
        }, `Exclude row ${f.row}`)));
    }
    host.append(list);
  }

  /** The RKR potential's check against the data (or why there is none). */
  renderLoop(doc, u, label) {
    const host = clear($('loop'));
    const p = doc.potential;
    if (!p) {
      host.append(el('p', { class: 'estimate-note' }, doc.potential_note ?? 'No potential curve for this analysis.'));
      return;
    }
    const c = p.check;
    host.append(
      el('p', { id: 'loop-verdict' }, el('strong', {}, c.verdict === 'consistent' ? 'Consistent. ' : c.verdict === 'inconsistent' ? 'Not consistent. ' : ''), c.summary),
      el('p', { class: 'estimate-note' }, `${p.method}; ${p.note}. r_e = ${this.num(p.re_angstrom, null, 6)} Å.`),
      ...p.warnings.map((w) => el('p', { class: 'error' }, w)));
    const rows = c.rows.map((r) => [
      r.v,
      { text: this.energy(r.observed_cm1, null, u)[0], class: 'num' },
      { text: this.energy(r.calculated_cm1, null, u)[0], class: 'num' },
      { text: this.pm(r.residual_cm1, null, u), class: 'num' },
      { text: r.normalized_residual === null ? '—' : r.normalized_residual.toFixed(2), class: 'num' },
      { text: r.b_residual_cm1 === null ? '—' : r.b_residual_cm1.toExponential(2), class: 'num' },
    ]);
    host.append(el('details', {}, el('summary', {}, `Observed − calculated for ${c.rows.length} levels (rms ${this.energy(c.rms_cm1, null, u)[0]} ${label})`),
      el('div', { class: 'table-wrap' }, table(['v', `observed / ${label}`, `calculated / ${label}`, `obs − calc / ${label}`, '(obs − calc)/σ', 'B obs − calc / cm⁻¹'], rows))));
  }

  /** A band list: both states, T00/Te, the numbering verdict and the energy cycle. */
  renderBands(doc, u, label) {
    const host = clear($('recommended'));
    const n = doc.numbering;
    const conv = doc.convergence;
    host.append(
      el('p', { class: 'big', id: 'd0-line' }, 'T00 = ', el('strong', { id: 't00-value' }, this.pm(doc.t00_cm1.value, doc.t00_cm1.sigma, u)),
        ` ${label} · Te = ${this.pm(doc.te_cm1.value, doc.te_cm1.sigma, u)} ${label}`),
      el('p', { id: 'numbering' }, el('strong', {}, 'Numbering: '), n.verdict_text, ` — ${n.why}`));
    for (const [name, state] of [['Upper', doc.states.upper], ['Lower', doc.states.lower]]) {
      const r = state?.recommended;
      host.append(el('p', {}, el('strong', {}, `${name} state: `),
        r && r.d0_cm1 !== null
          ? `D0 = ${this.pm(r.d0_cm1, r.sigma_stat_cm1, u)} (stat)${r.sigma_model_cm1 !== null ? ` ± ${this.energy(r.d0_cm1, r.sigma_model_cm1, u)[1]} (model)` : ''} ${label} — ${r.reason}`
          : r && r.d0_determined === false && r.above_top_cm1 != null
            ? `D0 not determined (the levels start far above v = 0); binding energy of the highest level ${this.energy(r.above_top_cm1, null, u)[0]} ${label} — ${r.reason}`
            : (name === 'Upper' ? doc.states.upper_note : doc.states.lower_note)));
    }
    if (conv.upper_limit_cm1) {
      host.append(el('p', {}, `Upper-state limit above lower v = 0: E_lim = T00 + D0′ = ${this.pm(conv.upper_limit_cm1.value, conv.upper_limit_cm1.sigma, u)} ${label}`,
        conv.d0_lower_cm1 ? `; with the atomic excitation energy given, D0″ = E_lim − E_atom = ${this.pm(conv.d0_lower_cm1.value, conv.d0_lower_cm1.sigma, u)} ${label}` : ''));
    }
    host.append(el('p', { class: 'estimate-note' }, doc.statement));
    const w = clear($('warnings'));
    const all = [...doc.warnings, ...(doc.states.upper?.warnings ?? []).map((t) => `upper state: ${t}`), ...(doc.states.lower?.warnings ?? []).map((t) => `lower state: ${t}`)];
    for (const text of all) w.append(el('li', {}, text));

    const est = clear($('estimates'));
    for (const [name, state] of [['Upper state', doc.states.upper], ['Lower state', doc.states.lower]]) {
      if (state) est.append(el('h3', {}, name), this.estimatesTable(state, u, label));
    }
    const g = doc.global_fit;
    const cons = clear($('constants'));
    if (g.upper) cons.append(el('h3', {}, 'Upper state (global fit of the band positions)'), ...this.constantsTables(g.upper, null, u, label));
    if (g.lower) cons.append(el('h3', {}, 'Lower state (global fit of the band positions)'), ...this.constantsTables(g.lower, null, u, label));
    const left = g.left_out ?? [];
    // Bands left out of the joint fit are counted and named where the count is shown.
    const leftText = left.length ? ` of ${doc.input.n_bands} (left out: ${left.map((l) => `${l.isotopologue}, ${l.n_bands} bands — ${l.reason}`).join('; ')})` : '';
    cons.append(el('p', { id: 'global-count' }, `Global fit: ${g.n_bands} bands${leftText}, ${g.n_params} parameters, χ²/dof = ${g.chi2_reduced === null ? '—' : this.num(g.chi2_reduced, null, 4)}. ${g.uncertainty_note}`));
    clear($('orders')).append(el('p', {}, g.order_selection.reason));
    clear($('loop')).append(el('p', { class: 'estimate-note' }, 'Potential curves are built for level lists with rotational constants B_v; open the levels of one state with a B column to close the loop.'));
    this.renderAssumptions(doc);
  }

  renderRecommended(report, u, label) {
    const r = report.recommended;
    const host = clear($('recommended'));
    if (r.d0_determined === false && r.above_top_cm1 !== null && r.above_top_cm1 !== undefined) {
      // Near-threshold levels: G(0), and so D0, is out of reach; the binding energy of the top
      // level and the asymptote are the results.
      host.append(
        el('p', { class: 'big', id: 'd0-line' },
          'Binding energy of the highest level = ', el('strong', { id: 'above-top-value' }, this.energy(r.above_top_cm1, null, u)[0]),
          ` ${label}`),
        el('p', { id: 'd0-interval' }, `Interval: ${this.energy(r.above_top_low_cm1, null, u)[0]} to ${this.energy(r.above_top_high_cm1, null, u)[0]} ${label}`,
          r.asymptote_cm1 !== null && r.asymptote_cm1 !== undefined
            ? ` · asymptote at ${this.energy(r.asymptote_cm1, null, u)[0]} ${label} on the data's energy scale` : '',
          r.v_d !== null && r.v_d !== undefined ? ` · v_D = ${this.num(r.v_d, null, 3)}` : ''),
        this.thresholdLine(report) ?? '',
        el('p', {}, 'D0 and De: not determined by these data (they start far above v = 0).',
          ` · method: ${report.estimates.find((e) => e.method === r.method)?.label ?? r.method}`),
        el('p', { class: 'reason' }, r.reason),
        el('p', { class: 'estimate-note' }, report.statement));
    } else if (r.d0_cm1 === null || r.d0_cm1 === undefined) {
      host.append(el('p', { class: 'big' }, 'No defensible dissociation limit from these data.'), el('p', {}, r.reason));
    } else {
      const [d0, stat] = this.energy(r.d0_cm1, r.sigma_stat_cm1, u);
      const model = r.sigma_model_cm1 === null || r.sigma_model_cm1 === undefined ? null : this.energy(r.d0_cm1, r.sigma_model_cm1, u)[1];
      host.append(
        el('p', { class: 'big', id: 'd0-line' },
          'D0 = ', el('strong', { id: 'd0-value' }, d0),
          stat ? ` ± ${stat} (stat)` : ' (stat. σ not estimable)',
          model ? ` ± ${model} (model)` : '',
          ` ${label}`),
        r.d0_low_cm1 !== null && r.d0_low_cm1 !== undefined
          ? el('p', { id: 'd0-interval' }, `Interval: ${this.energy(r.d0_low_cm1, r.sigma_stat_cm1, u)[0]} to ${this.energy(r.d0_high_cm1, r.sigma_stat_cm1, u)[0]} ${label}`,
            el('span', { class: 'estimate-note', title: 'Holds every estimate the data support, each with twice its statistical uncertainty, and at least the extrapolated part of D0 on either side; it never reaches below the observed sum of spacings.' }, ' (what the data allow)'),
            r.n_bound_min !== null && r.n_bound_min !== undefined
              ? ` · bound levels: ${r.n_bound_min === r.n_bound_max ? r.n_bound_min : `${r.n_bound_min} to ${r.n_bound_max}`}`
              : '')
          : '',
        el('p', {}, `De = D0 + G(0) = ${this.pm(r.de_cm1, null, u)} ${label}`,
          ` · method: ${report.estimates.find((e) => e.method === r.method)?.label ?? r.method}`,
          r.spread_methods?.length > 1 ? ` · model spread over ${r.spread_methods.length} methods` : ''),
        el('p', { class: 'reason' }, r.reason),
        el('p', { class: 'estimate-note' }, report.statement));
    }
    const w = clear($('warnings'));
    for (const text of report.warnings) w.append(el('li', {}, text));
  }

  // v_D mod 1, C_n and the scattering length from the near-dissociation fit that holds a given
  // asymptote, else the primary one (null when neither gave them).
  thresholdLine(report) {
    const pick = ['leroy-bernstein-known-asymptote', 'leroy-bernstein']
      .map((m) => report.estimates.find((e) => e.method === m && e.leroy_bernstein?.v_d_fraction != null))
      .find((e) => e);
    if (!pick) return null;
    const lb = pick.leroy_bernstein;
    const parts = [`From the ${pick.label}: v_D mod 1 = ${this.num(lb.v_d_fraction, null, 3)}`];
    if (lb.cn_cm1_an) parts.push(`C_${lb.n.value} = ${this.num(lb.cn_cm1_an.value, lb.cn_cm1_an.sigma)} cm⁻¹ Å^${lb.n.value}`);
    if (lb.scattering_length_a0) {
      parts.push(`s-wave scattering length a = ${this.num(lb.scattering_length_a0.value, lb.scattering_length_a0.sigma)} a0`);
    }
    return el('p', { id: 'threshold-line' }, parts.join(' · '));
  }

  estimatesTable(report, u, label) {
    // Three rows per method: its name (bold when it enters the recommendation), its numbers, and
    // what it rests on. The name spans the table so the numbers keep the width.
    const head = [`D0 / ${label}`, `De / ${label}`, 'v_D', 'bound levels', 'extrap\u00adolated', `MC median [16 %, 84 %] / ${label}`];
    const body = [];
    for (const e of report.estimates) {
      const mc = e.monte_carlo?.d0;
      // Median on one line, the 16–84 % interval under it, so the column stays narrow.
      const mcText = mc && mc.median !== null
        ? [this.energy(mc.median, null, u)[0], el('br'),
          `[${mc.p16 === null ? '—' : this.energy(mc.p16, null, u)[0]}, ${mc.p84 === null ? '—' : this.energy(mc.p84, null, u)[0]}]`]
        : '—';
      const cls = e.defensible ? 'defensible' : 'other';
      body.push(el('tr', { class: `${cls} name-row`, 'data-method': e.method },
        el('th', { scope: 'rowgroup', colspan: head.length },
          e.label, el('span', { class: 'in-rec' }, e.defensible ? ' · in the recommendation' : ' · not in the recommendation'),
          e.d0_cm1 === null || e.sigma_scale === null || e.sigma_scale === undefined || e.sigma_scale === 1 ? null
            : el('span', { class: 'in-rec', title: 'factor applied to the data σ for this method: √χ²ν of its own fit under the σ-scaling setting' },
              ` · data σ ×${this.num(e.sigma_scale, null, 3)}`))));
      body.push(el('tr', { class: `${cls} main` },
        el('td', { class: 'num' }, e.d0_cm1 === null ? '—' : this.pm(e.d0_cm1, e.d0_sigma_cm1, u)),
        el('td', { class: 'num' }, e.de_cm1 === null ? '—' : this.pm(e.de_cm1, e.de_sigma_cm1, u)),
        el('td', { class: 'num' }, e.v_d === null ? '—' : this.num(e.v_d, e.v_d_sigma, 4)),
        el('td', { class: 'num' }, e.n_bound ?? '—'),
        el('td', { class: 'num' }, e.extrapolated_fraction === null ? '—' : `${(100 * e.extrapolated_fraction).toFixed(1)} %`),
        el('td', { class: 'num' }, mcText)));
      body.push(el('tr', { class: `${cls} note-row` },
        el('td', { colspan: head.length, class: 'note' }, e.defensible ? e.defensible_reason : `${e.reason}; ${e.defensible_reason}`)));
    }
    return el('table', { class: 'estimates' },
      el('caption', {}, 'σ: one standard deviation, statistical only: the data covariance, with the data σ multiplied by √χ²ν of the method\'s own fit when the σ-scaling setting applies (shown beside its name; the observed sum has no fit and keeps the data σ)'),
      el('thead', {}, el('tr', {}, head.map((h) => el('th', { scope: 'col' }, h)))),
      el('tbody', {}, body));
  }

  constantsTables(c, m, u, label) {
    const rows = [];
    const add = (name, k) => {
      if (k) rows.push([name, { text: this.pm(k.value, k.sigma, u), class: 'num' }]);
    };
    add('ωe', c.we_cm1);
    add('ωexe', c.wexe_cm1);
    add('ωeye', c.weye_cm1);
    add('ωeze', c.weze_cm1);
    if (c.zero_point_cm1) rows.push(['G(0) (zero point above the minimum)', { text: this.pm(c.zero_point_cm1.value, c.zero_point_cm1.sigma, u), class: 'num' }]);
    if (m) {
      rows.push(['Morse De = ωe²/4ωexe', { text: this.pm(m.de_cm1?.value, m.de_cm1?.sigma, u), class: 'num' }]);
      if (m.a_per_angstrom) rows.push(['Morse a / Å⁻¹', { text: this.num(m.a_per_angstrom.value, m.a_per_angstrom.sigma), class: 'num' }]);
      if (m.force_constant_n_per_m) rows.push(['force constant k_e / N m⁻¹', { text: this.num(m.force_constant_n_per_m.value, m.force_constant_n_per_m.sigma), class: 'num' }]);
    }
    const out = [table(['constant', `value / ${label}`], rows, `From the order-${c.order} fit of G(v); σ from its covariance, scaled as the σ-scaling setting says for this fit`)];
    if (c.correlation?.length > 1) {
      const names = c.dunham.map((d) => d.name ?? `Y${d.k}0`);
      out.push(table(['', ...names], c.correlation.map((row, i) => [names[i], ...row.map((x) => ({ text: x.toFixed(3), class: 'num' }))]), 'Correlation of the Dunham coefficients'));
    }
    return out;
  }

  renderOrders(report) {
    const o = report.order_selection;
    const rows = o.rows.map((r) => ({
      class: r.order === report.fit.order ? 'chosen' : '',
      cells: [r.order, r.dof, { text: this.num(r.chi2, null, 6), class: 'num' },
        { text: r.chi2_reduced === null ? '—' : this.num(r.chi2_reduced, null, 4), class: 'num' },
        { text: r.aicc === null ? '—' : this.num(r.aicc, null, 7), class: 'num' },
        { text: r.bic === null ? '—' : this.num(r.bic, null, 7), class: 'num' },
        { text: r.f_p_value === null ? '—' : r.f_p_value.toExponential(2), class: 'num' },
        { text: r.top_significance === null ? '—' : r.top_significance.toFixed(1), class: 'num' }],
    }));
    const host = clear($('orders'));
    host.append(table(['order', 'dof', 'χ²', 'χ²/dof', 'AICc', 'BIC', 'p (F, one step)', '|Y_K|/σ'], rows), el('p', {}, o.reason));
  }

  renderAssumptions(report) {
    clear($('assumptions')).append(
      el('h3', {}, 'Each number rests on'), el('ul', {}, report.assumptions.map((a) => el('li', {}, a))),
      el('h3', {}, 'Conventions'), el('ul', {}, report.conventions.map((a) => el('li', {}, a))),
      report.uncertainty ? el('p', {}, `Uncertainty: ${report.uncertainty.note}`) : null,
      report.monte_carlo ? el('p', {}, `Monte Carlo: ${report.monte_carlo.ran ? `${report.monte_carlo.samples} draws, seed ${report.monte_carlo.seed} (the same seed and version give the same draws)` : 'not run'} — ${report.monte_carlo.note}`) : null);
  }
}
