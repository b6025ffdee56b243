import { cva, type VariantProps } from 'class-variance-authority'
import { cn } from '#app/utils/misc.ts'

export const buttonVariants = cva(
	'inline-flex items-center justify-center gap-2 rounded-md text-sm font-medium transition-colors disabled:cursor-not-allowed disabled:opacity-60',
	{
		variants: {
			variant: {
				primary: 'bg-accent text-paper hover:bg-accent-strong',
				secondary: 'border border-rule-strong bg-sheet text-ink hover:bg-paper',
				danger: 'bg-danger text-paper hover:opacity-90',
				quiet: 'text-accent hover:bg-accent-soft',
			},
			size: { md: 'h-9 px-4', sm: 'h-8 px-3 text-xs' },
		},
		defaultVariants: { variant: 'primary', size: 'md' },
	},
)

export type ButtonProps = React.ButtonHTMLAttributes<HTMLButtonElement> & VariantProps<typeof buttonVariants>

export function Button({ className, variant, size, type = 'button', ...props }: ButtonProps) {
	return <button type={type} className={cn(buttonVariants({ variant, size }), className)} {...props} />
}
