import { reactRouter } from '@react-router/dev/vite'
import tailwindcss from '@tailwindcss/vite'
import { defineConfig } from 'vite'

export default defineConfig({
	plugins: [tailwindcss(), reactRouter()],
	server: { host: '127.0.0.1' },
	optimizeDeps: { include: ['d3-scale', 'd3-shape', 'd3-selection', 'd3-zoom', 'clsx', 'tailwind-merge'] },
})
