/** Tidemark's own line icons: 16 px grid, stroke only, colour from the text. */
import type { SVGProps } from "react";

type IconProps = SVGProps<SVGSVGElement>;

function Icon({ children, ...props }: IconProps) {
  return (
    <svg viewBox="0 0 16 16" width="16" height="16" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" strokeLinejoin="round" aria-hidden="true" {...props}>
      {children}
    </svg>
  );
}

/** The mark: a gauge post standing in three swells of water. */
export function TidemarkLogo(props: IconProps) {
  return (
    <svg viewBox="0 0 32 32" width="28" height="28" aria-hidden="true" {...props}>
      <rect x="14.5" y="3" width="3" height="20" rx="1" fill="currentColor" />
      <path d="M11 7h4M11 11h4M11 15h4" stroke="currentColor" strokeWidth="1.5" />
      <path d="M3 20c3-2.5 5-2.5 8 0s5 2.5 8 0 5-2.5 8 0" fill="none" stroke="currentColor" strokeWidth="2.2" strokeLinecap="round" />
      <path d="M3 25c3-2.5 5-2.5 8 0s5 2.5 8 0 5-2.5 8 0" fill="none" stroke="currentColor" strokeWidth="2.2" strokeLinecap="round" opacity="0.65" />
    </svg>
  );
}

export const PassIcon = (p: IconProps) => <Icon {...p}><path d="M3.5 8.5l3 3 6-7" /></Icon>;
export const WarnIcon = (p: IconProps) => <Icon {...p}><path d="M8 2.5l6 11H2z" /><path d="M8 6.5v3M8 11.6v.1" /></Icon>;
export const FailIcon = (p: IconProps) => <Icon {...p}><circle cx="8" cy="8" r="6" /><path d="M5.6 5.6l4.8 4.8M10.4 5.6l-4.8 4.8" /></Icon>;
export const ErrorIcon = (p: IconProps) => <Icon {...p}><rect x="2.5" y="2.5" width="11" height="11" rx="2" /><path d="M6.2 6.3a1.9 1.9 0 113 1.5c-.7.4-1.2.8-1.2 1.6M8 11.6v.1" /></Icon>;
export const SortAscIcon = (p: IconProps) => <Icon {...p}><path d="M8 3v10M4.5 6.5L8 3l3.5 3.5" /></Icon>;
export const SortDescIcon = (p: IconProps) => <Icon {...p}><path d="M8 3v10M4.5 9.5L8 13l3.5-3.5" /></Icon>;
export const SortNoneIcon = (p: IconProps) => <Icon {...p} opacity="0.45"><path d="M5 6l3-3 3 3M5 10l3 3 3-3" /></Icon>;
export const CopyIcon = (p: IconProps) => <Icon {...p}><rect x="5.5" y="5.5" width="8" height="8" rx="1.5" /><path d="M10.5 3.5v-.5a1 1 0 00-1-1h-6a1 1 0 00-1 1v6a1 1 0 001 1h.5" /></Icon>;
export const DownloadIcon = (p: IconProps) => <Icon {...p}><path d="M8 2.5v8M4.5 7.5L8 11l3.5-3.5M3 13.5h10" /></Icon>;
export const ChevronLeftIcon = (p: IconProps) => <Icon {...p}><path d="M10 3.5L5.5 8l4.5 4.5" /></Icon>;
export const ChevronRightIcon = (p: IconProps) => <Icon {...p}><path d="M6 3.5L10.5 8 6 12.5" /></Icon>;
