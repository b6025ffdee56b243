import js from '@eslint/js'
import tseslint from 'typescript-eslint'

const pureLayer = {
	patterns: [
		{ group: ['react', 'react-dom', 'react-router', 'drizzle-orm', 'drizzle-orm/*'], message: 'shared/ is pure: no UI or database code.' },
		{ group: ['node:*', '#app/*'], message: 'shared/ is pure: no Node built-ins, no app code.' },
	],
}

export default tseslint.config(
	{ ignores: ['build/**', '.react-router/**', 'node_modules/**', 'drizzle/**', 'playwright-report/**', 'test-results/**'] },
	js.configs.recommended,
	...tseslint.configs.recommended,
	{
		languageOptions: { parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname } },
		rules: {
			'@typescript-eslint/no-floating-promises': 'error',
			'@typescript-eslint/switch-exhaustiveness-check': 'error',
			'@typescript-eslint/consistent-type-imports': 'error',
			'@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
		},
	},
	{ files: ['shared/**/*.ts'], rules: { 'no-restricted-imports': ['error', pureLayer] } },
	{
		files: ['app/components/**/*.{ts,tsx}'],
		rules: { 'no-restricted-imports': ['error', { patterns: [{ group: ['#app/.server/*'], message: 'Components never import server code.' }] }] },
	},
	{ files: ['**/*.{js,mjs}'], ...tseslint.configs.disableTypeChecked },
)
