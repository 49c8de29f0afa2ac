// The analysis-settings form. It edits the session's AnalysisSettings object as plain data and
// hands it back; validation and every consequence are core's.

import { el, clear, keepFocus, $ } from './dom.js';

const FIELDS = [
  { key: 'mc_samples', label: 'Monte Carlo samples', type: 'int', help: '0 disables Monte Carlo' },
  { key: 'seed', label: 'Monte Carlo seed', type: 'int' },
  { key: 'lb_n', label: 'LeRoy–Bernstein n', type: 'float', help: '3 resonant, 4 ion–atom, 5 quadrupole, 6 van der Waals' },
  { key: 'lb_top_levels', label: 'Top levels for LeRoy–Bernstein', type: 'int?', help: 'empty: automatic' },
  { key: 'lb_fit_n_free', label: 'Also fit n freely', type: 'bool' },
  { key: 'lb_cn_cm1_an', label: 'Theoretical C_n / cm⁻¹Åⁿ', type: 'float?', help: 'empty: none' },
  { key: 'order', label: 'Force G(v) order', type: 'int?', help: 'empty: recommended order' },
  { key: 'max_order', label: 'Highest order tried', type: 'int' },
  { key: 'sigma_scaling', label: 'Scale σ by √χ²ν', type: 'choice', choices: [['when-above-one', 'when χ²ν > 1'], ['always', 'always'], ['never', 'never']] },
];

export class SettingsForm {
  constructor(onChange) {
    this.onChange = onChange;
    this.settings = null;
  }

  /** Show the settings in force; a focused field keeps the focus. */
  show(settings, kind) {
    return keepFocus($('settings'), () => this.draw(settings, kind));
  }

  draw(settings, kind) {
    this.settings = settings;
    const form = clear($('settings'));
    const mass = settings.mass;
    const massText = mass?.kind === 'reduced_mass' ? String(mass.mu_u) : mass?.kind === 'nuclides' ? `${mass.a},${mass.b}` : '';
    form.append(el('label', {}, 'Mass: μ in u, or two nuclides (e.g. 1H,35Cl)',
      el('input', { name: 'mass', value: massText, placeholder: 'e.g. 14.5 or 7Li,35Cl', onchange: (e) => this.setMass(e.target.value) })));
    for (const f of FIELDS) {
      const v = settings[f.key];
      let input;
      if (f.type === 'bool') {
        input = el('input', { type: 'checkbox', name: f.key, checked: !!v, onchange: (e) => this.set(f.key, e.target.checked) });
      } else if (f.type === 'choice') {
        input = el('select', { name: f.key, onchange: (e) => this.set(f.key, e.target.value) },
          f.choices.map(([value, label]) => el('option', { value, selected: value === v }, label)));
      } else {
        input = el('input', {
          name: f.key, inputmode: 'decimal', value: v ?? '', placeholder: f.help ?? '',
          onchange: (e) => {
            const x = this.parse(f.type, e.target.value);
            // Not a number (or empty where a value is required): show the value still in force.
            if (x === undefined) e.target.value = this.settings[f.key] ?? '';
            else this.set(f.key, x);
          },
        });
      }
      form.append(el('label', { title: f.help ?? '' }, f.label, input));
    }
    if (kind === 'bands') this.showBands(form, settings.bands ?? {});
  }

  /** Band-list choices: atoms of each isotopologue tag, predictions, energy cycle, heads. */
  showBands(form, b) {
    const isoText = (b.isotopologues ?? []).map((i) => `${i.tag}=${i.a},${i.b}`).join('; ');
    const rot = b.rotation;
    const rotText = (s) => (s ? `${s.be_cm1},${s.alpha_e_cm1}` : '');
    form.append(el('h3', {}, 'Band list'),
      el('label', { title: 'Tags in the isotopologue column and their two atoms (nuclide labels or masses in u)' }, 'Isotopologue atoms',
        el('input', { name: 'isotopologues', value: isoText, placeholder: '1H-35Cl=1H,35Cl; 2H-35Cl=D,35Cl', onchange: (e) => this.setBand('isotopologues', this.parseIsotopologues(e.target.value)) })),
      el('label', { title: 'Tags of isotopologues to predict (they need atoms above)' }, 'Predict isotopologues',
        el('input', { name: 'predict', value: (b.predict ?? []).join(', '), placeholder: 'e.g. 2H-37Cl', onchange: (e) => this.setBand('predict', e.target.value.split(/[,;\s]+/).filter(Boolean)) })),
      el('label', { title: 'Excitation energy of the atomic asymptote the upper state goes to, above the lower state\'s asymptote (cm⁻¹): gives D0″ = T00 + D0′ − E_atom' }, 'Atomic excitation energy / cm⁻¹',
        el('input', { name: 'atomic_excitation_cm1', inputmode: 'decimal', value: b.atomic_excitation_cm1 ?? '', placeholder: 'empty: none', onchange: (e) => this.setBand('atomic_excitation_cm1', this.parse('float?', e.target.value)) })),
      el('label', { title: 'Be and αe of the upper state, cm⁻¹ (needed to correct band heads to origins)' }, 'Upper Be, αe / cm⁻¹',
        el('input', { name: 'rot_upper', value: rotText(rot?.upper), placeholder: 'e.g. 0.81902,0.01206', onchange: () => this.setRotation(form) })),
      el('label', { title: 'Be and αe of the lower state, cm⁻¹' }, 'Lower Be, αe / cm⁻¹',
        el('input', { name: 'rot_lower', value: rotText(rot?.lower), placeholder: 'e.g. 1.44563,0.01593', onchange: () => this.setRotation(form) })));
  }

  parseIsotopologues(text) {
    return text.split(';').map((t) => t.trim()).filter(Boolean).map((t) => {
      const [tag, atoms = ''] = t.split('=');
      const [a = '', b = ''] = atoms.split(',');
      return { tag: tag.trim(), a: a.trim(), b: b.trim() };
    });
  }

  setRotation(form) {
    const read = (name) => {
      const parts = form.elements[name].value.split(',').map((x) => Number.parseFloat(x));
      return parts.length === 2 && parts.every(Number.isFinite) ? { be_cm1: parts[0], alpha_e_cm1: parts[1] } : null;
    };
    const upper = read('rot_upper');
    const lower = read('rot_lower');
    this.setBand('rotation', upper && lower ? { upper, lower } : null);
  }

  setBand(key, value) {
    if (value === undefined) return;
    this.settings = { ...this.settings, bands: { ...(this.settings.bands ?? {}), [key]: value } };
    this.onChange(this.settings);
  }

  parse(type, text) {
    const t = text.trim();
    if (t === '' && type.endsWith('?')) return null;
    const x = type.startsWith('int') ? Number.parseInt(t, 10) : Number.parseFloat(t);
    return Number.isFinite(x) ? x : undefined;
  }

  setMass(text) {
    const t = text.trim();
    let mass = null;
    if (t.includes(',')) {
      const [a, b] = t.split(',').map((s) => s.trim());
      mass = { kind: 'nuclides', a, b };
    } else if (t !== '') {
      const mu = Number.parseFloat(t);
      mass = Number.isFinite(mu) ? { kind: 'reduced_mass', mu_u: mu } : { kind: 'nuclides', a: t, b: t };
    }
    this.settings = { ...this.settings, mass };
    this.onChange(this.settings);
  }

  set(key, value) {
    if (value === undefined) return;
    this.settings = { ...this.settings, [key]: value };
    this.onChange(this.settings);
  }
}
