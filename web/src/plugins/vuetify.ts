import '@fontsource/fira-sans/400.css'
import '@fontsource/fira-sans/500.css'
import '@fontsource/fira-sans/600.css'
import '@mdi/font/css/materialdesignicons.css'
import 'vuetify/styles'
import '../styles/fonts.css'
import '../styles/choice-grid.css'
import { createVuetify, type ThemeDefinition } from 'vuetify'
import { storedThemeName } from '@/composables/use-theme-choice'
import { THEME_NAMES } from './theme-names'

/** Daylight palette: slate-teal chrome, amber for the boost figures that matter. */
const crackpointLight: ThemeDefinition = {
  dark: false,
  colors: {
    background: '#f4f5f2',
    surface: '#ffffff',
    'surface-variant': '#dfe4e1',
    'on-surface-variant': '#2e3a36',
    primary: '#1f4e5f',
    'on-primary': '#ffffff',
    secondary: '#8a5a1c',
    accent: '#d9822b',
    success: '#2e7d4f',
    warning: '#b26a00',
    error: '#b3261e',
    info: '#2a6f97',
  },
}

/** Night palette for a dim workshop: the same hues, lifted for contrast on charcoal. */
const crackpointDark: ThemeDefinition = {
  dark: true,
  colors: {
    background: '#14181a',
    surface: '#1d2326',
    'surface-variant': '#2c3538',
    'on-surface-variant': '#d3dbd8',
    primary: '#6fb3c8',
    'on-primary': '#0c2129',
    secondary: '#e0a85a',
    accent: '#f2a03d',
    success: '#6cc48f',
    warning: '#f0b04a',
    error: '#f2867e',
    info: '#7cb8dd',
  },
}

export const vuetify = createVuetify({
  theme: {
    defaultTheme: storedThemeName(),
    themes: {
      [THEME_NAMES.light]: crackpointLight,
      [THEME_NAMES.dark]: crackpointDark,
    },
  },
  defaults: {
    VTextField: { variant: 'outlined', density: 'comfortable' },
    VSelect: { variant: 'outlined', density: 'comfortable' },
  },
})
